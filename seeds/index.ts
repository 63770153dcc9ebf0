// Demo seed loader: reads seeds/demo/*.json and inserts what is missing, in one transaction; safe to run again.
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Sequelize } from 'sequelize';
import { z } from 'zod';
import { Lab } from '../src/lib/server/db/models';
import { record } from '../src/lib/server/audit';

const here = path.dirname(fileURLToPath(import.meta.url));

const labFile = z.object({
	lab: z.object({ slug: z.string().min(1), name: z.string().min(1), institution: z.string().min(1) })
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
	const created: string[] = [];
	await sequelize.transaction(async (transaction) => {
		const [, isNew] = await Lab.findOrCreate({ where: { slug: lab.slug }, defaults: lab, transaction });
		if (isNew) created.push(`lab ${lab.slug}`);
		if (created.length) {
			await record({ action: 'seed.loaded', actorLabel: 'seed', details: { created } }, transaction);
		}
	});
	return { created };
}
