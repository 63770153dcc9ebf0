// Demo seed loader: reads seeds/demo/*.json and inserts what is missing, in one transaction; safe to run again.
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Sequelize } from 'sequelize';
import { z } from 'zod';
import {
	ConsentFormVersion,
	ForcePlate,
	Lab,
	Participant,
	ParticipantLength,
	ParticipantPersonal,
	Study,
	StudyMember,
	User
} from '../src/lib/server/db/models';
import { record } from '../src/lib/server/audit/record';
import { forcePlateSchema } from '../src/lib/processing/forces/plate';
import { hashPassword } from '../src/lib/server/auth/password';
import { seedConsent } from './consent';
import { seedSessionsAndRuns } from './runs';

const here = path.dirname(fileURLToPath(import.meta.url));

const labFile = z.object({
	lab: z.object({ slug: z.string().min(1), name: z.string().min(1), institution: z.string().min(1) }),
	/** the lab's force plates, checked with the one plate schema */
	forcePlates: z.array(forcePlateSchema).default([])
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

const participantsFile = z.object({
	studies: z.record(
		z.string(),
		z.object({
			ethicsReference: z.string().min(1),
			ethicsExpiresOn: z.string().regex(/^\d{4}-\d{2}-\d{2}$/),
			defaultTable: z.enum(['dempster-winter-2009', 'de-leva-1996', 'zatsiorsky-regression-2002']),
			participantPrefix: z.string().regex(/^[A-Z]{2,5}$/),
			consentForm: z.object({ bodyMarkdown: z.string().min(1), confirmations: z.array(z.string().min(1)).min(1) }),
			participants: z.array(
				z.object({
					sex: z.enum(['female', 'male', 'not reported']),
					birthYear: z.number().int(),
					bodyMassKg: z.number().min(20).max(300),
					statureM: z.number().min(0.8).max(2.5),
					dominantSide: z.enum(['left', 'right']).nullable(),
					fullName: z.string().min(1),
					email: z.string().email(),
					phone: z.string().nullable()
				})
			),
			/** participant: 1-based position in the list above */
			lengths: z.array(
				z.object({
					participant: z.number().int().min(1),
					segment: z.string().min(1),
					lengthM: z.number().positive(),
					measuredOn: z.string()
				})
			)
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
	const { lab, forcePlates } = readJson('lab.json', labFile);
	const demo = readJson('people.json', peopleFile);
	const records = readJson('participants.json', participantsFile);
	// hash outside the transaction: argon2 is deliberately slow
	const passwordHash = await hashPassword(demo.password);
	const created: string[] = [];
	await sequelize.transaction(async (transaction) => {
		const [labRow, isNew] = await Lab.findOrCreate({ where: { slug: lab.slug }, defaults: lab, transaction });
		if (isNew) created.push(`lab ${lab.slug}`);
		// a plate of that name, in use or archived, means the lab has it already: it is never changed or set up again
		for (const plate of forcePlates) {
			const [, made] = await ForcePlate.findOrCreate({
				where: { labId: labRow.id, name: plate.name },
				defaults: { labId: labRow.id, ...plate },
				transaction
			});
			if (made) created.push(`force plate ${plate.name}`);
		}
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
				const [, m] = await StudyMember.findOrCreate({
					where: { studyId, userId: user.id },
					defaults: { studyId, userId: user.id, role },
					transaction
				});
				if (m) created.push(`role ${code}:${role} for ${p.email}`);
			}
		}
		for (const [code, st] of Object.entries(records.studies)) {
			const studyId = studyIds.get(code);
			if (!studyId) throw new Error(`seeds/demo/participants.json: unknown study ${code}`);
			const study = (await Study.findByPk(studyId, { transaction }))!;
			// fill only what is still empty: a lab's own settings are never overwritten
			if (study.participantPrefix === null) {
				await study.update(
					{
						participantPrefix: st.participantPrefix,
						ethicsReference: study.ethicsReference ?? st.ethicsReference,
						ethicsExpiresOn: study.ethicsExpiresOn ?? st.ethicsExpiresOn,
						defaultTable: st.defaultTable
					},
					{ transaction }
				);
				created.push(`settings of ${code}`);
			}
			const [, formMade] = await ConsentFormVersion.findOrCreate({
				where: { studyId, version: 1 },
				defaults: {
					studyId,
					version: 1,
					bodyMarkdown: st.consentForm.bodyMarkdown,
					confirmations: st.consentForm.confirmations,
					publishedBy: null
				},
				transaction
			});
			if (formMade) created.push(`consent form ${code} v1`);
			const ids: string[] = [];
			for (const [i, p] of st.participants.entries()) {
				const n = i + 1;
				const pcode = `${st.participantPrefix}-${String(n).padStart(3, '0')}`;
				const [row, made] = await Participant.findOrCreate({
					where: { code: pcode },
					defaults: {
						studyId,
						code: pcode,
						sex: p.sex,
						birthYear: p.birthYear,
						bodyMassKg: p.bodyMassKg,
						statureM: p.statureM,
						dominantSide: p.dominantSide,
						notes: null
					},
					transaction
				});
				ids.push(row.id);
				if (!made) continue;
				await ParticipantPersonal.create({ participantId: row.id, fullName: p.fullName, email: p.email, phone: p.phone }, { transaction });
				created.push(`participant ${pcode}`);
				if (study.nextParticipantNumber <= n) await study.update({ nextParticipantNumber: n + 1 }, { transaction });
			}
			for (const l of st.lengths) {
				const participantId = ids[l.participant - 1];
				if (!participantId) throw new Error(`seeds/demo/participants.json: ${code} has no participant ${l.participant}`);
				const [, made] = await ParticipantLength.findOrCreate({
					where: { participantId, segment: l.segment, measuredOn: l.measuredOn },
					defaults: { participantId, segment: l.segment, lengthM: l.lengthM, measuredOn: l.measuredOn },
					transaction
				});
				if (made) created.push(`length ${l.segment} of ${code} #${l.participant}`);
			}
		}
		// consent states of the demo participants (seeds/demo/consent.json)
		created.push(...(await seedConsent(sequelize, transaction)));
		// demo sessions with a trial and a finished run each (seeds/recordings), computed by the worker's own code
		created.push(...(await seedSessionsAndRuns(sequelize, transaction)));
		if (created.length) {
			await record({ action: 'seed.loaded', actorLabel: 'seed', details: { created } }, transaction);
		}
	});
	return { created };
}
