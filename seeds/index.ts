// Demo seed loader: reads seeds/demo/*.json and inserts what is missing, in one transaction; safe to run again.
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Sequelize } from 'sequelize';
import { z } from 'zod';
import { Lab, Study, StudyMember, User } from '../src/lib/server/db/models';
import { record } from '../src/lib/server/audit';
import { hashPassword } from '../src/lib/server/auth/password';

const here = path.dirname(fileURLToPath(import.meta.url));

const labFile = z.object({
	lab: z.object({ slug: z.string().min(1), name: z.string().min(1), institution: z.string().min(1) })
});

const peopleFile = z.object({
	password: z.string().min(12),
	studies: z.array(z.object({ code: z.string().min(1), title: z.string().min(1) })),
	people: z.array(
		z.object({
			email: z.string().email(),
			name: z.string().min(1),
			isAdmin: z.boolean(),
			roles: z.record(z.string(), z.enum(['pi', 'researcher', 'technician']))
		})
	)
});

function readJson<T>(file: string, schema: z.ZodType<T>): T {
	const full = path.join(here, 'demo', file);
	const parsed = schema.safeParse(JSON.parse(fs.readFileSync(full, 'utf8')));
	if (!parsed.success) {
		throw new Error(`seeds/demo/${file}: ${parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ')}`);
	}
	return parsed.data;
}

/** True when the database holds no lab yet, i.e. nothing a user could have entered. */
export async function databaseIsEmpty(sequelize: Sequelize): Promise<boolean> {
	return (await sequelize.model('Lab').count()) === 0;
}

export interface SeedReport {
	created: string[];
}

/** Inserts every demo record that is not there yet; existing rows are never changed. */
export async function loadDemoSeed(sequelize: Sequelize): Promise<SeedReport> {
	const { lab } = readJson('lab.json', labFile);
	const demo = readJson('people.json', peopleFile);
	// hash outside the transaction: argon2 is deliberately slow
	const passwordHash = await hashPassword(demo.password);
	const created: string[] = [];
	await sequelize.transaction(async (transaction) => {
		const [, isNew] = await Lab.findOrCreate({ where: { slug: lab.slug }, defaults: lab, transaction });
		if (isNew) created.push(`lab ${lab.slug}`);
		const studyIds = new Map<string, string>();
		for (const st of demo.studies) {
			const [study, made] = await Study.findOrCreate({ where: { code: st.code }, defaults: st, transaction });
			studyIds.set(st.code, study.id);
			if (made) created.push(`study ${st.code}`);
		}
		for (const p of demo.people) {
			const [user, made] = await User.findOrCreate({
				where: { email: p.email },
				defaults: { email: p.email, name: p.name, isAdmin: p.isAdmin, passwordHash, emailVerified: null },
				transaction
			});
			if (made) created.push(`person ${p.email}`);
			for (const [code, role] of Object.entries(p.roles)) {
				const studyId = studyIds.get(code);
				if (!studyId) throw new Error(`seeds/demo/people.json: ${p.email} has a role in unknown study ${code}`);
				const [, m] = await StudyMember.findOrCreate({ where: { studyId, userId: user.id }, defaults: { studyId, userId: user.id, role }, transaction });
				if (m) created.push(`role ${code}:${role} for ${p.email}`);
			}
		}
		if (created.length) {
			await record({ action: 'seed.loaded', actorLabel: 'seed', details: { created } }, transaction);
		}
	});
	return { created };
}
