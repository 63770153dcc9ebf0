// Starts the built app against a fresh, migrated and seeded database, and signs demo personas in over HTTP.
import fs from 'node:fs';
import pg from 'pg';
import { freshDatabase } from './helpers';
import { freePort, start, stop, waitForPort, type Child } from '../../src/cli/lib/proc';
import { prepareDatabase } from '../../src/cli/lib/prepare-db';

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

/** Signs in with the password form; returns the session cookie header. */
export async function signInAs(
	base: string,
	email: string,
	password = DEMO_PASSWORD
): Promise<{ status: number; cookie: string; location: string | null }> {
	const body = new URLSearchParams({ providerId: 'password', email, password, redirectTo: '/' });
	const res = await fetch(`${base}/signin?/password`, {
		method: 'POST',
		body,
		redirect: 'manual',
		// accept: text/html makes it a browser-like form post (SvelteKit answers other clients with JSON)
		headers: { origin: base, 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html' }
	});
	const cookie = res.headers
		.getSetCookie()
		.map((c) => c.split(';')[0])
		.filter((c) => c.includes('session-token') && !c.endsWith('='))
		.join('; ');
	return { status: res.status, cookie, location: res.headers.get('location') };
}

export async function startApp(label: string): Promise<AppUnderTest> {
	const entry = `${process.env.MOMENTRY_BUILD_DIR ?? 'build'}/index.js`;
	if (!fs.existsSync(entry)) throw new Error(`${entry} is missing: \`npm test\` builds the app first`);
	const fresh = await freshDatabase(label);
	await prepareDatabase(fresh.url, { seed: true, log: () => {} });
	const port = await freePort();
	const base = `http://127.0.0.1:${port}`;
	const app = start('app', process.execPath, [entry], {
		quiet: true,
		// BODY_SIZE_LIMIT: the trial upload enforces its own per-file limit while streaming (UPLOAD_LIMIT_BYTES)
		env: { ...process.env, DATABASE_URL: fresh.url, HOST: '127.0.0.1', PORT: String(port), ORIGIN: base, BODY_SIZE_LIMIT: 'Infinity' }
	});
	await waitForPort(port, '127.0.0.1', 30_000, app);
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
		if (!email) continue;
		const r = await signInAs(base, email);
		if (!r.cookie) throw new Error(`could not sign in as ${email} (status ${r.status}, location ${r.location})`);
		cookies[persona as Persona] = r.cookie;
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
