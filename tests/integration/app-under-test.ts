// Starts the built app against a fresh, migrated and seeded database, and signs demo personas in over HTTP.
import fs from 'node:fs';
import { createHash } from 'node:crypto';
import pg from 'pg';
import { afterAll, beforeAll } from 'vitest';
import { freshDatabase } from './helpers';
import { stop, type Child } from '../../src/cli/lib/proc';
import { prepareDatabase } from '../../src/cli/lib/prepare-db';
import { passwordSignIn, sessionCookie, startBuiltApp } from '../../src/cli/lib/built-app';

export const DEMO_PASSWORD = 'momentry-demo-2026';
export const PERSONAS = {
	anonymous: null,
	admin: 'admin@alder-creek.example',
	piA: 'pi@alder-creek.example',
	researcherA: 'researcher@alder-creek.example',
	technicianA: 'technician@alder-creek.example',
	memberB: 'knee.researcher@alder-creek.example'
} as const;
export type Persona = keyof typeof PERSONAS;

/** Ids of the seeded demo records the tests refer to. */
export interface DemoIds {
	studyA: string; // SHELF-REACH
	studyB: string; // KNEE-60
	participantA: string; // ALD-001 of SHELF-REACH
	sessionA: string; // the seeded session of ALD-001
	trialA: string; // its trial
	runA: string; // the seeded done run of that trial
}

export interface AppUnderTest {
	base: string;
	url: string;
	app: Child;
	/** A connected client on the app's database, closed by close(). */
	sql: pg.Client;
	ids: DemoIds;
	/** Cookie header of each signed-in persona. */
	cookies: Record<Persona, string>;
	close(): Promise<void>;
}

/** Signs in with the password form; returns the session cookie header ('' when refused). */
export const signInAs = (base: string, email: string, password = DEMO_PASSWORD) => passwordSignIn(base, email, password);

export async function startApp(label: string): Promise<AppUnderTest> {
	const entry = `${process.env.MOMENTRY_BUILD_DIR ?? 'build'}/index.js`;
	if (!fs.existsSync(entry)) throw new Error(`${entry} is missing: \`npm test\` builds the app first`);
	const fresh = await freshDatabase(label);
	await prepareDatabase(fresh.url, { seed: true, log: () => {} });
	const { app, base } = await startBuiltApp(entry, { ...process.env, DATABASE_URL: fresh.url });
	const sql = new pg.Client({ connectionString: fresh.url });
	await sql.connect();
	const studies = (await sql.query<{ id: string; code: string }>(`SELECT id, code FROM studies`)).rows;
	const ids: DemoIds = {
		studyA: studies.find((r) => r.code === 'SHELF-REACH')!.id,
		studyB: studies.find((r) => r.code === 'KNEE-60')!.id,
		participantA: (await sql.query<{ id: string }>(`SELECT id FROM participants WHERE code = 'ALD-001'`)).rows[0].id,
		...(
			await sql.query<{ sessionA: string; trialA: string }>(
				`SELECT s.id AS "sessionA", t.id AS "trialA" FROM sessions s JOIN participants p ON p.id = s.participant_id JOIN trials t ON t.session_id = s.id WHERE p.code = 'ALD-001' ORDER BY s.created_at, t.created_at LIMIT 1`
			)
		).rows[0],
		runA: ''
	};
	ids.runA =
		(await sql.query<{ id: string }>(`SELECT id FROM runs WHERE trial_id = $1 ORDER BY created_at LIMIT 1`, [ids.trialA])).rows[0]?.id ??
		'';
	const cookies = { anonymous: '' } as Record<Persona, string>;
	for (const [persona, email] of Object.entries(PERSONAS)) {
		if (email) cookies[persona as Persona] = await sessionCookie(base, email, DEMO_PASSWORD);
	}
	return {
		base,
		url: fresh.url,
		app,
		sql,
		ids,
		cookies,
		close: async () => {
			await sql.end();
			await stop(app);
			await fresh.drop();
		}
	};
}

/**
 * Starts the app before the tests of the file (or describe block) it is called in and closes it after them. The object
 * is filled in place when the app is up, so the file may keep it in a constant and use it in its helpers.
 */
export function useApp(label: string): AppUnderTest {
	const app = {} as AppUnderTest;
	beforeAll(async () => {
		Object.assign(app, await startApp(label));
	});
	afterAll(async () => {
		await app.close?.();
	});
	return app;
}

/** Requests as a browser makes them, without following redirects: a GET (a page unless `accept` says otherwise) and a form post. */
export function browserRequests(app: AppUnderTest) {
	return {
		get: (path: string, cookie: string, accept = 'text/html') =>
			fetch(app.base + path, { headers: { cookie, accept }, redirect: 'manual' }),
		post: (path: string, cookie: string, form: Record<string, string>) =>
			fetch(app.base + path, {
				method: 'POST',
				body: new URLSearchParams(form),
				redirect: 'manual',
				headers: { cookie, origin: app.base, accept: 'text/html', 'content-type': 'application/x-www-form-urlencoded' }
			})
	};
}

/** The six angle channels of a right leg on a fixed base, in the order the upload tests write their columns. */
export const LEG = [
	'right.hip.flexion',
	'right.hip.adduction',
	'right.hip.internalRotation',
	'right.knee.flexion',
	'right.ankle.dorsiflexion',
	'right.ankle.inversion'
];

/** The hex SHA-256 of some bytes, as a trial's rawSha256 records them. */
export const sha = (b: Uint8Array) => createHash('sha256').update(b).digest('hex');
