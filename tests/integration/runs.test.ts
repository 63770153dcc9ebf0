// Processing runs end to end over HTTP with the real worker process: known moments come back, a killed worker's run
/* eslint-disable @typescript-eslint/no-explicit-any -- JSON answers are read loosely here; their shapes are what the assertions check */
// is retried and stored once, consent is enforced at start and at processing time, reruns add runs, summaries match.
//
// Tolerance of the moment comparison, and why (the pipeline's own round trip, tests/unit/processing/round-trip.test.ts,
// states it): the demo trial is forward-simulated at 200 Hz with angles written as ° to 6 decimals; without a
// filter, central differences and the CSV rounding keep every sample within 0.25 % of the trial's peak |Q|. The
// server adds nothing to that: the results are stored as Float64 bytes and come back bit for bit.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import { startApp, type AppUnderTest, type Persona } from './app-under-test';
import { start, stop, type Child } from '../../src/cli/lib/proc';
import { runOptionsSchema } from '../../src/lib/processing/pipeline';

const REC = 'seeds/recordings/ald-001-shelf-reach';
let app: AppUnderTest;
let worker: Child | null = null;

// short expiry and maintenance so a killed worker's job is handed on within seconds (the app enqueues with these)
const QUEUE_ENV = { RUN_EXPIRE_SECONDS: '20', QUEUE_MAINTENANCE_SECONDS: '1' };

function startWorker(): Child {
	return start('worker', process.execPath, ['--import', 'tsx', 'src/cli/worker.ts'], {
		quiet: true,
		env: { ...process.env, ...QUEUE_ENV, DATABASE_URL: app.url }
	});
}
async function workerReady(w: Child): Promise<void> {
	const deadline = Date.now() + 30_000;
	while (!w.tail.some((l) => l.includes('worker listening'))) {
		if (w.proc.exitCode !== null) throw new Error(`worker exited: ${w.tail.join('\n')}`);
		if (Date.now() > deadline) throw new Error(`worker not ready: ${w.tail.join('\n')}`);
		await new Promise((r) => setTimeout(r, 100));
	}
}

async function api(persona: Persona, method: string, path: string, body?: unknown) {
	const headers: Record<string, string> = { cookie: app.cookies[persona], origin: app.base, accept: 'application/json' };
	if (body !== undefined) headers['content-type'] = 'application/json';
	const res = await fetch(app.base + path, {
		method,
		headers,
		body: body === undefined ? undefined : JSON.stringify(body),
		redirect: 'manual'
	});
	const text = await res.text();
	let json: any = null;
	try {
		json = JSON.parse(text);
	} catch {
		json = { text };
	}
	return { status: res.status, json };
}

async function formPost(persona: Persona, path: string, fields: Record<string, string | string[]>) {
	const body = new URLSearchParams();
	for (const [k, v] of Object.entries(fields)) for (const x of Array.isArray(v) ? v : [v]) body.append(k, x);
	const res = await fetch(app.base + path, {
		method: 'POST',
		body,
		redirect: 'manual',
		headers: { cookie: app.cookies[persona], origin: app.base, accept: 'text/html', 'content-type': 'application/x-www-form-urlencoded' }
	});
	return { status: res.status, location: res.headers.get('location'), text: await res.text() };
}

/** A new session of ALD-001 with the demo trial's set-up, made through the session form. */
async function newShelfSession(): Promise<string> {
	const setup = JSON.parse(fs.readFileSync(`${REC}.setup.json`, 'utf8'));
	const load = setup.loads[0];
	const r = await formPost('technicianA', `/studies/${app.ids.studyA}/participants/${app.ids.participantA}/sessions/new`, {
		sessionOn: '2026-11-25',
		operator: 'Test Operator',
		task: 'Box to the overhead shelf',
		conditions: '',
		table: setup.table,
		limbs: ['right.arm'],
		'base.right.arm': 'upright',
		'load.0.limb': load.limb,
		'load.0.segment': load.segment,
		'load.0.massKg': String(load.massKg),
		'load.0.point': load.pointM.join(', '),
		'load.0.label': load.label
	});
	expect(r.status, r.text.slice(0, 500)).toBe(303);
	const sid = r.location?.match(/sessions\/([0-9a-f-]{36})/)?.[1];
	expect(sid, `location ${r.location}`).toBeTruthy();
	return sid!;
}

async function upload(sessionId: string, fileName: string, bytes: Uint8Array): Promise<string> {
	const form = new FormData();
	form.append('file', new Blob([new Uint8Array(bytes)], { type: 'text/csv' }), fileName);
	const res = await fetch(`${app.base}/api/studies/${app.ids.studyA}/sessions/${sessionId}/trials`, {
		method: 'POST',
		body: form,
		headers: { cookie: app.cookies.technicianA, origin: app.base, accept: 'application/json' }
	});
	const json = (await res.json()) as { trial?: { id: string }; message?: string };
	expect(res.status, json.message).toBe(201);
	return json.trial!.id;
}

async function waitForRun(
	studyId: string,
	runId: string,
	until: (run: any) => boolean,
	timeoutMs = 60_000,
	persona: Persona = 'researcherA'
) {
	const deadline = Date.now() + timeoutMs;
	for (;;) {
		const r = await api(persona, 'GET', `/api/studies/${studyId}/runs/${runId}`);
		expect(r.status).toBe(200);
		if (until(r.json.run)) return r.json.run;
		if (Date.now() > deadline) throw new Error(`run ${runId} did not settle: ${JSON.stringify(r.json.run)}`);
		await new Promise((res) => setTimeout(res, 150));
	}
}

/** Known torques (N·m) per DOF column from the generator's *.torques.csv. */
function knownTorques(): { time: number[]; byDof: Map<string, number[]> } {
	const [head, ...rows] = fs.readFileSync(`${REC}.torques.csv`, 'utf8').trim().split('\n');
	const names = head.split(',').map((h) => h.replace(/ \(.*\)$/, ''));
	const byDof = new Map<string, number[]>(names.slice(1).map((n) => [n, []]));
	const time: number[] = [];
	for (const row of rows) {
		const v = row.split(',').map(Number);
		time.push(v[0]);
		names.slice(1).forEach((n, j) => byDof.get(n)!.push(v[j + 1]));
	}
	return { time, byDof };
}

/** A session + trial of another participant, inserted directly: the state a trial is in when consent lapses after upload. */
async function trialOf(participantCode: string): Promise<{ studyId: string; trialId: string }> {
	const { rows } = await app.sql.query<{ study_id: string; id: string }>(`SELECT study_id, id FROM participants WHERE code = $1`, [
		participantCode
	]);
	const p = rows[0];
	const src = (
		await app.sql.query<{
			setup: unknown;
			raw_upload_id: string;
			sha256: string;
			sample_hz: number;
			frame_count: number;
			duration_s: number;
			channels: string[];
		}>(
			`SELECT s.setup, t.raw_upload_id, t.sha256, t.sample_hz, t.frame_count, t.duration_s, t.channels FROM trials t JOIN sessions s ON s.id = t.session_id
			 JOIN participants q ON q.id = s.participant_id WHERE q.study_id = $1 ORDER BY t.created_at LIMIT 1`,
			[p.study_id]
		)
	).rows[0];
	const sid = (
		await app.sql.query<{ id: string }>(
			`INSERT INTO sessions (study_id, participant_id, session_on, operator, task, setup) VALUES ($1, $2, '2026-11-01', 'Test', 'Test task', $3) RETURNING id`,
			[p.study_id, p.id, JSON.stringify(src.setup)]
		)
	).rows[0].id;
	const tid = (
		await app.sql.query<{ id: string }>(
			`INSERT INTO trials (session_id, raw_upload_id, file_name, sha256, sample_hz, frame_count, duration_s, channels) VALUES ($1, $2, 'copy.csv', $3, $4, $5, $6, $7) RETURNING id`,
			[sid, src.raw_upload_id, src.sha256, src.sample_hz, src.frame_count, src.duration_s, src.channels]
		)
	).rows[0].id;
	return { studyId: p.study_id, trialId: tid };
}

const seriesCount = async (runId: string) =>
	Number((await app.sql.query<{ n: string }>(`SELECT count(*) AS n FROM run_series WHERE run_id = $1`, [runId])).rows[0].n);

beforeAll(async () => {
	Object.assign(process.env, QUEUE_ENV);
	app = await startApp('runs');
}, 120_000);
afterAll(async () => {
	if (worker) await stop(worker, 'SIGTERM', 5_000);
	await app?.close();
	for (const k of Object.keys(QUEUE_ENV)) delete process.env[k];
});

describe('consent at processing time', () => {
	it('a run queued while consent was valid fails with the reason when the participant has withdrawn by the time it is processed', async () => {
		const { studyId, trialId } = await trialOf('KNE-002');
		const started = await api('memberB', 'POST', `/api/studies/${studyId}/trials/${trialId}/runs`, { cutoffHz: 6 });
		expect(started.status, JSON.stringify(started.json)).toBe(201);
		expect(started.json.run.state).toBe('queued');
		// no worker runs yet: the withdrawal lands before processing
		await app.sql.query(`UPDATE participants SET consent_state = 'withdrawn', consent_state_since = now() WHERE code = 'KNE-002'`);
		worker = startWorker();
		await workerReady(worker);
		const run = await waitForRun(studyId, started.json.run.id, (r) => r.state === 'failed', 30_000, 'memberB');
		expect(run.error).toMatch(/KNE-002 has withdrawn consent/);
		expect(await seriesCount(run.id)).toBe(0);

		// a person's retry is refused while consent is not valid, and goes through (same run row) once it is
		const refused = await api('memberB', 'POST', `/api/studies/${studyId}/runs/${run.id}/retry`);
		expect(refused.status).toBe(409);
		expect(refused.json.message).toMatch(/KNE-002 has withdrawn consent/);
		await app.sql.query(`UPDATE participants SET consent_state = 'consented' WHERE code = 'KNE-002'`);
		const retried = await api('memberB', 'POST', `/api/studies/${studyId}/runs/${run.id}/retry`);
		expect(retried.status).toBe(200);
		expect(retried.json.run.id).toBe(run.id);
		const done = await waitForRun(studyId, run.id, (r) => r.state === 'done', 30_000, 'memberB');
		expect(done.attempts).toBe(2);
		expect(await seriesCount(run.id)).toBeGreaterThan(0);
	});
});

describe('a run through the HTTP API', () => {
	let sessionId: string;
	let trialId: string;
	let runId: string;
	const peakOfKnown = () => Math.max(...[...knownTorques().byDof.values()].flat().map(Math.abs));

	it('uploads the demo recording into a new session and returns its moments equal to the known torques within 0.25 % of the peak', async () => {
		sessionId = await newShelfSession();
		trialId = await upload(sessionId, 'shelf-reach.csv', fs.readFileSync(`${REC}.csv`));
		const started = await api('researcherA', 'POST', `/api/studies/${app.ids.studyA}/trials/${trialId}/runs`, { cutoffHz: null });
		expect(started.status, JSON.stringify(started.json)).toBe(201);
		runId = started.json.run.id;
		expect(started.json.run.rawSha256).toMatch(/^[0-9a-f]{64}$/);
		expect(started.json.run.softwareVersion).toMatch(/^0\.1\.0/);
		const run = await waitForRun(app.ids.studyA, runId, (r) => r.state === 'done' || r.state === 'failed');
		expect(run.error).toBeNull();
		expect(run.state).toBe('done');
		expect(run.progress).toBe(1);

		const known = knownTorques();
		const s = await api('researcherA', 'GET', `/api/studies/${app.ids.studyA}/runs/${runId}/series?quantity=moment`);
		expect(s.status).toBe(200);
		expect(s.json.curves.map((c: any) => c.name).sort()).toEqual([...known.byDof.keys()].sort());
		const peak = peakOfKnown();
		let worst = 0;
		for (const c of s.json.curves) {
			const q = known.byDof.get(c.name)!;
			expect(c.unit).toBe('N·m');
			expect(c.positive).toBeTruthy();
			expect(c.v.length).toBe(q.length);
			c.v.forEach((v: number, k: number) => {
				expect(c.t[k]).toBeCloseTo(known.time[k], 9);
				worst = Math.max(worst, Math.abs(v - q[k]));
			});
		}
		expect(worst).toBeLessThan(0.0025 * peak);
	});

	it('records the options, the scaled model and the raw file hash with the run', async () => {
		const { rows } = await app.sql.query(
			`SELECT r.options, r.model, r.raw_sha256, t.sha256 FROM runs r JOIN trials t ON t.id = r.trial_id WHERE r.id = $1`,
			[runId]
		);
		// as sent, with the schema's defaults for what was not (gap filling off, the default end treatment)
		expect(rows[0].options).toEqual(runOptionsSchema.parse({ cutoffHz: null }));
		expect(rows[0].raw_sha256).toBe(rows[0].sha256);
		expect(rows[0].model.table).toBe('de-leva-1996');
		expect(rows[0].model.parameters.model.bodies.length).toBeGreaterThan(0);
		expect(rows[0].model.loadsApplied[0].massKg).toBe(2);
	});

	it('stores every series as Float64 bytes: time, six quantities per DOF, a 3-component reaction per joint', async () => {
		const { rows } = await app.sql.query<{ name: string; quantity: string; components: number; bytes: number }>(
			`SELECT name, quantity, components, octet_length(data) AS bytes FROM run_series WHERE run_id = $1`,
			[runId]
		);
		const frames = knownTorques().time.length;
		const dofs = knownTorques().byDof.size;
		expect(rows.filter((r) => r.quantity === 'time')).toHaveLength(1);
		for (const q of ['angle', 'velocity', 'acceleration', 'moment', 'moment_per_kg', 'power'])
			expect(rows.filter((r) => r.quantity === q)).toHaveLength(dofs);
		const reactions = rows.filter((r) => r.quantity === 'reaction_force');
		expect(reactions.length).toBeGreaterThan(0);
		for (const r of rows) expect(Number(r.bytes)).toBe(frames * 8 * r.components);
		expect(reactions.every((r) => r.components === 3)).toBe(true);
	});

	it('reduces a series for plotting and keeps every extreme (min/max per bucket)', async () => {
		const full = await api(
			'researcherA',
			'GET',
			`/api/studies/${app.ids.studyA}/runs/${runId}/series?quantity=moment&dof=right.shoulder.flexion`
		);
		const reduced = await api(
			'researcherA',
			'GET',
			`/api/studies/${app.ids.studyA}/runs/${runId}/series?quantity=moment&dof=right.shoulder.flexion&points=50`
		);
		expect(reduced.status).toBe(200);
		const f = full.json.curves[0].v as number[];
		const r = reduced.json.curves[0].v as number[];
		expect(r.length).toBeLessThanOrEqual(50);
		expect(Math.max(...r)).toBe(Math.max(...f));
		expect(Math.min(...r)).toBe(Math.min(...f));
		const bad = await api('researcherA', 'GET', `/api/studies/${app.ids.studyA}/runs/${runId}/series?quantity=torque`);
		expect(bad.status).toBe(400);
		expect(bad.json.message).toMatch(/quantity must be one of/);
	});

	it('stores the edge zone the worker computed, and answers it with the series', async () => {
		const { rows } = await app.sql.query<{ edge_zone: any; frames: number; sample_hz: number }>(
			`SELECT r.edge_zone, t.frame_count AS frames, t.sample_hz FROM runs r JOIN trials t ON t.id = r.trial_id WHERE r.id = $1`,
			[runId]
		);
		const z = rows[0].edge_zone;
		expect(z).toBeTruthy();
		for (const k of ['startSamples', 'endSamples']) expect(Number.isInteger(z[k]) && z[k] >= 0, k).toBe(true);
		expect(z.startSamples + z.endSamples).toBeLessThanOrEqual(rows[0].frames);
		expect(z.startSeconds).toBeCloseTo(z.startSamples / rows[0].sample_hz, 9);
		expect(z.endSeconds).toBeCloseTo(z.endSamples / rows[0].sample_hz, 9);
		expect(typeof z.basis).toBe('string');
		const s = await api(
			'researcherA',
			'GET',
			`/api/studies/${app.ids.studyA}/runs/${runId}/series?quantity=moment&dof=right.elbow.flexion`
		);
		expect(s.json.edgeZone).toEqual({ computed: true, ...z });
		// a run made before edge zones (NULL) answers "not computed", all zero
		await app.sql.query(`UPDATE runs SET edge_zone = NULL WHERE id = $1`, [runId]);
		try {
			const old = await api('researcherA', 'GET', `/api/studies/${app.ids.studyA}/runs/${runId}/summary`);
			expect(old.json.edgeZone).toEqual({
				computed: false,
				startSeconds: 0,
				endSeconds: 0,
				startSamples: 0,
				endSamples: 0,
				basis: 'not computed (run before edge zones were introduced)'
			});
			expect(old.json.scope).toMatch(/before edge zones were introduced/);
		} finally {
			await app.sql.query(`UPDATE runs SET edge_zone = $2 WHERE id = $1`, [runId, JSON.stringify(z)]);
		}
	});

	it('has a summary that leaves the edge zone out by default and takes it in with ?includeEdgeZones=1 (direct max and min of the stored series)', async () => {
		const zone = (await app.sql.query(`SELECT edge_zone FROM runs WHERE id = $1`, [runId])).rows[0].edge_zone;
		const outside = await api('researcherA', 'GET', `/api/studies/${app.ids.studyA}/runs/${runId}/summary`);
		const whole = await api('researcherA', 'GET', `/api/studies/${app.ids.studyA}/runs/${runId}/summary?includeEdgeZones=1`);
		expect(outside.status).toBe(200);
		expect(whole.status).toBe(200);
		expect(outside.json.edgeZonesIncluded).toBe(false);
		expect(whole.json.edgeZonesIncluded).toBe(true);
		expect(outside.json.edgeZone).toEqual({ computed: true, ...zone });
		expect(outside.json.scope).toMatch(/outside the edge zones/);
		for (const quantity of ['moment', 'angle', 'power'] as const) {
			const s = await api('researcherA', 'GET', `/api/studies/${app.ids.studyA}/runs/${runId}/series?quantity=${quantity}`);
			for (const c of s.json.curves) {
				const all = c.v as number[];
				const n = all.length;
				const from = zone.startSamples;
				const to = n - zone.endSamples; // exclusive
				for (const [answer, lo, hi] of [
					[outside, from, to],
					[whole, 0, n]
				] as const) {
					const row = (answer.json.summary as any[]).find((x) => x.dof === c.name && x.quantity === quantity);
					expect(row, `${quantity} ${c.name}`).toBeTruthy();
					const v = all.slice(lo, hi);
					const max = Math.max(...v);
					const min = Math.min(...v);
					expect(row.peakPositive).toBeCloseTo(max, 9);
					expect(row.peakNegative).toBeCloseTo(min, 9);
					expect(row.peakPositiveTime).toBeCloseTo(c.t[lo + v.indexOf(max)], 9);
					expect(row.peakNegativeTime).toBeCloseTo(c.t[lo + v.indexOf(min)], 9);
					expect(row.range).toBeCloseTo(max - min, 9);
					expect(row.mean).toBeCloseTo(v.reduce((a, b) => a + b, 0) / v.length, 9);
					expect(row.samples).toBe(v.length);
				}
			}
		}
		const bad = await api('researcherA', 'GET', `/api/studies/${app.ids.studyA}/runs/${runId}/summary?includeEdgeZones=yes`);
		expect(bad.status).toBe(400);
		expect(bad.json.message).toMatch(/includeEdgeZones must be 1 .* or 0/);
	});

	it('the run page hatches the edge zone and says what the summary leaves out, with a switch', async () => {
		// the seeded run (low-pass filtered, so its edge zone is not empty)
		const seeded = (await app.sql.query(`SELECT edge_zone FROM runs WHERE id = $1`, [app.ids.runA])).rows[0].edge_zone;
		expect(seeded.startSamples + seeded.endSamples).toBeGreaterThan(0);
		const page = await fetch(`${app.base}/studies/${app.ids.studyA}/runs/${app.ids.runA}`, {
			headers: { cookie: app.cookies.researcherA, accept: 'text/html' }
		});
		const html = await page.text();
		expect(page.status).toBe(200);
		expect(html).toContain('data-testid="edge-zone-band"');
		expect(html).toContain('edge zone: results not reliable');
		expect(html).toContain('Recording extra frames before and after the movement of interest is common practice');
		expect(html).toMatch(/Peaks, range and mean over the samples outside the edge zones/);
		expect(html).toMatch(/name="includeEdgeZones" value="1"(?![^>]*checked)/);
		const on = await (
			await fetch(`${app.base}/studies/${app.ids.studyA}/runs/${app.ids.runA}?includeEdgeZones=1`, {
				headers: { cookie: app.cookies.researcherA, accept: 'text/html' }
			})
		).text();
		expect(on).toMatch(/Peaks, range and mean over every sample, edge zones included/);
	});

	it('adds a second run when run again with other options; the first stays as it was', async () => {
		const before = await api(
			'researcherA',
			'GET',
			`/api/studies/${app.ids.studyA}/runs/${runId}/series?quantity=moment&dof=right.elbow.flexion`
		);
		// the form action, as a browser without JavaScript sends it
		const r = await formPost('researcherA', `/studies/${app.ids.studyA}/trials/${trialId}?/start`, { filter: 'lowpass', cutoffHz: '4' });
		expect(r.status).toBe(303);
		expect(r.location).toContain(`/sessions/${sessionId}`);
		const { rows } = await app.sql.query<{ id: string; options: any }>(
			`SELECT id, options FROM runs WHERE trial_id = $1 ORDER BY created_at`,
			[trialId]
		);
		expect(rows).toHaveLength(2);
		expect(rows[1].options.cutoffHz).toBe(4);
		const second = await waitForRun(app.ids.studyA, rows[1].id, (x) => x.state === 'done' || x.state === 'failed');
		expect(second.state).toBe('done');
		expect(second.number).toBe(2);
		const first = await api('researcherA', 'GET', `/api/studies/${app.ids.studyA}/runs/${runId}`);
		expect(first.json.run.state).toBe('done');
		const after = await api(
			'researcherA',
			'GET',
			`/api/studies/${app.ids.studyA}/runs/${runId}/series?quantity=moment&dof=right.elbow.flexion`
		);
		expect(after.json.curves[0].v).toEqual(before.json.curves[0].v);
		const other = await api(
			'researcherA',
			'GET',
			`/api/studies/${app.ids.studyA}/runs/${rows[1].id}/series?quantity=moment&dof=right.elbow.flexion`
		);
		expect(other.json.curves[0].v).not.toEqual(before.json.curves[0].v);
	});

	it('refuses invalid options with a message naming the field, and changes nothing', async () => {
		const count = async () => Number((await app.sql.query(`SELECT count(*) AS n FROM runs WHERE trial_id = $1`, [trialId])).rows[0].n);
		const n = await count();
		const r = await api('researcherA', 'POST', `/api/studies/${app.ids.studyA}/trials/${trialId}/runs`, { cutoffHz: -3 });
		expect(r.status).toBe(400);
		expect(r.json.errors.cutoffHz).toMatch(/positive/);
		const f = await formPost('researcherA', `/studies/${app.ids.studyA}/trials/${trialId}?/start`, { filter: 'lowpass', cutoffHz: '' });
		expect(f.status).toBe(400);
		expect(f.text).toContain('Enter the cutoff frequency');
		expect(await count()).toBe(n);
	});

	it('fails a run whose results are not finite numbers, with the reason naming quantity, DOF and time, storing nothing', async () => {
		// gravity of 1e308 m/s² passes the options' finite check, but every moment overflows (IEEE 754 doubles end near 1.8e308)
		const started = await api('researcherA', 'POST', `/api/studies/${app.ids.studyA}/trials/${trialId}/runs`, {
			cutoffHz: 6,
			gravity: [0, -1e308, 0]
		});
		expect(started.status, JSON.stringify(started.json)).toBe(201);
		const run = await waitForRun(app.ids.studyA, started.json.run.id, (r) => r.state === 'done' || r.state === 'failed');
		expect(run.state).toBe('failed');
		expect(run.error).toMatch(
			/^The results are not finite numbers: the moment of DOF right\.shoulder\.flexion is (-?Infinity|NaN) at 0 s \(sample 1\)/
		);
		expect(run.error).toMatch(/stores nothing/);
		// a deterministic failure: not tried again
		expect(run.attempts).toBe(1);
		expect(await seriesCount(run.id)).toBe(0);
		const { rows } = await app.sql.query(`SELECT summary, model FROM runs WHERE id = $1`, [run.id]);
		expect(rows[0].summary).toBeNull();
		// nothing to show or export: the results API refuses a run that is not done
		const sum = await api('researcherA', 'GET', `/api/studies/${app.ids.studyA}/runs/${run.id}/summary`);
		expect(sum.status).toBe(409);
		const ser = await api('researcherA', 'GET', `/api/studies/${app.ids.studyA}/runs/${run.id}/series?quantity=moment`);
		expect(ser.status).toBe(409);
	});

	it('answers residual analysis per channel with a suggested cutoff', async () => {
		const r = await api('researcherA', 'GET', `/api/studies/${app.ids.studyA}/trials/${trialId}/residuals`);
		expect(r.status).toBe(200);
		expect(r.json.channels).toHaveLength(knownTorques().byDof.size);
		for (const c of r.json.channels) {
			expect(c.problem).toBeNull();
			expect(c.residuals.length).toBe(c.cutoffs.length);
			expect(c.suggestedHz).toBeGreaterThan(0);
		}
	});
});

describe('consent when a run is started', () => {
	it.each([
		['ALD-005', /ALD-005 has not given consent \(state: invited\); processing runs are refused/],
		['KNE-003', /KNE-003 has withdrawn consent \(state: withdrawn\); processing runs are refused/]
	])('refuses a run of %s over the API and the form action with 409 naming the reason, and creates nothing', async (code, reason) => {
		const { studyId, trialId } = await trialOf(code);
		const persona: Persona = studyId === app.ids.studyA ? 'researcherA' : 'memberB';
		const r = await api(persona, 'POST', `/api/studies/${studyId}/trials/${trialId}/runs`, { cutoffHz: 6 });
		expect(r.status).toBe(409);
		expect(r.json.message).toMatch(reason);
		const f = await formPost(persona, `/studies/${studyId}/trials/${trialId}?/start`, { filter: 'lowpass', cutoffHz: '6' });
		expect(f.status).toBe(409);
		expect(f.text).toMatch(reason);
		expect(Number((await app.sql.query(`SELECT count(*) AS n FROM runs WHERE trial_id = $1`, [trialId])).rows[0].n)).toBe(0);
	});
});

describe('a worker killed in the middle of a run', () => {
	it('hands the job to a new worker, which completes it once with exactly one set of results', async () => {
		// a long recording: the demo reach repeated 200 times (1000 s at 200 Hz), continuous at each join (it starts and ends at rest in the same posture)
		const [header, ...rows] = fs.readFileSync(`${REC}.csv`, 'utf8').trim().split('\n');
		const body = rows.slice(0, -1);
		const lines = [header];
		for (let k = 0; k < 200; k++)
			for (const r of body) {
				const i = r.indexOf(',');
				lines.push(String(Number((Number(r.slice(0, i)) + 5 * k).toFixed(9))) + r.slice(i));
			}
		const sessionId = await newShelfSession();
		const trialId = await upload(sessionId, 'long-reach.csv', Buffer.from(lines.join('\n') + '\n'));
		const started = await api('researcherA', 'POST', `/api/studies/${app.ids.studyA}/trials/${trialId}/runs`, { cutoffHz: 6 });
		expect(started.status).toBe(201);
		const runId = started.json.run.id;
		const running = await waitForRun(app.ids.studyA, runId, (r) => r.state === 'running' && r.progress > 0, 60_000);
		expect(running.state).toBe('running');
		// kill -9: no chance to clean up, as when a machine is lost
		process.kill(-worker!.proc.pid!, 'SIGKILL');
		await worker!.exited;
		const stuck = await api('researcherA', 'GET', `/api/studies/${app.ids.studyA}/runs/${runId}`);
		expect(stuck.json.run.state).toBe('running');
		expect(stuck.json.run.progress).toBeLessThan(1);
		worker = startWorker();
		await workerReady(worker);
		const done = await waitForRun(app.ids.studyA, runId, (r) => r.state === 'done' || r.state === 'failed', 120_000);
		expect(done.error).toBeNull();
		expect(done.state).toBe('done');
		expect(done.attempts).toBe(2);
		const { rows: series } = await app.sql.query<{ name: string; quantity: string; n: string }>(
			`SELECT name, quantity, count(*) AS n FROM run_series WHERE run_id = $1 GROUP BY name, quantity`,
			[runId]
		);
		const dofs = knownTorques().byDof.size;
		expect(series.every((s) => Number(s.n) === 1)).toBe(true);
		expect(series.filter((s) => s.quantity !== 'reaction_force' && s.quantity !== 'time')).toHaveLength(6 * dofs);
		const jobs = await app.sql.query<{ state: string; retry_count: number }>(
			`SELECT state, retry_count FROM jobs.job WHERE name = 'run-process' AND data->>'runId' = $1`,
			[runId]
		);
		expect(jobs.rows).toEqual([{ state: 'completed', retry_count: 1 }]);
		const finished = await app.sql.query(`SELECT count(*) AS n FROM audit_events WHERE action = 'run.finished' AND record_id = $1`, [
			runId
		]);
		expect(Number(finished.rows[0].n)).toBe(1);
	}, 240_000);
});
