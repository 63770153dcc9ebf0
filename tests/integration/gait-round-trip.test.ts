// Round trip with ground contact through the HTTP API and the real worker: a walking trial forward-simulated under
// known joint torques (src/lib/processing/simulate-walking.ts: both legs on a moving pelvis, a known GRF, free moment
// and moving CoP on each foot that lands on a plate; plates turned 10° and 95° about the vertical and offset, one
// forces-moments and one forces-cop, forces at 1000 Hz, angles at 200 Hz) goes in as an angle file and a force file,
// the lab's plates set up where the simulation put them, a run is started, the worker processes it, and the moments,
// contacts and gait events read back over the API are compared with what the simulation knows.
//
// Outside source of every comparison: the forward simulation (RK4 on M(q) q̈ = Q − c(q, q̇), the engine's mass
// matrix checked against sympy.physics.mechanics) and its known loads. Tolerance of the moments: the rule of the
// pure-level round trip (tests/unit/processing/gait-round-trip.test.ts), with the same 15 Hz cutoff: away from the
// contacts' edges 2.5 % of the trial's peak |Q| + 0.1 N·m; within 8 samples (40 ms) of a plate's threshold crossing
// 8 N·m (the GRF under the 20 N threshold is not applied, and the filter spreads the force's rise). Through HTTP the
// angles are written as degrees to 6 decimals and the forces to 6 decimals, which that rule leaves room for.
/* eslint-disable @typescript-eslint/no-explicit-any -- JSON answers are read loosely here; their shapes are what the assertions check */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { DEMO_PASSWORD, startApp, type AppUnderTest } from './app-under-test';
import { waitForMail } from './helpers';
import { start, stop, type Child } from '../../src/cli/lib/proc';
import { forcesCsv, simulateWalkingTrial, type WalkingTrial } from '../../src/lib/processing/simulate-walking';
import { sessionSetupSchema } from '../../src/lib/processing/session-model';
import { DEFAULT_CONTACT_THRESHOLD_N } from '../../src/lib/processing/forces';
import { momentErrors } from '../reference/known-moments';

const BODY = { sex: 'female' as const, bodyMass: 62, stature: 1.68 };
let app: AppUnderTest;
let worker: Child | null = null;
let trial: WalkingTrial;
let studyId: string;

const form = (fields: Record<string, string | string[]>) => {
	const body = new URLSearchParams();
	for (const [k, v] of Object.entries(fields)) for (const x of Array.isArray(v) ? v : [v]) body.append(k, x);
	return body;
};
async function formPost(cookie: string, path: string, fields: Record<string, string | string[]>) {
	const res = await fetch(app.base + path, {
		method: 'POST',
		body: form(fields),
		redirect: 'manual',
		headers: { cookie, origin: app.base, accept: 'text/html', 'content-type': 'application/x-www-form-urlencoded' }
	});
	return { status: res.status, location: res.headers.get('location') ?? '', text: await res.text() };
}
async function api(method: string, path: string, body?: unknown) {
	const headers: Record<string, string> = { cookie: app.cookies.researcherA, origin: app.base, accept: 'application/json' };
	if (body !== undefined) headers['content-type'] = 'application/json';
	const res = await fetch(app.base + path, { method, headers, body: body === undefined ? undefined : JSON.stringify(body) });
	return { status: res.status, json: (await res.json()) as any };
}

/** The lab's plates named as the simulation names them, moved to where it put them (the page's update form, or create). */
async function setUpPlates(t: WalkingTrial): Promise<void> {
	const rows = (await app.sql.query<{ id: string; name: string }>(`SELECT id, name FROM force_plates WHERE archived_at IS NULL`)).rows;
	for (const p of t.plates) {
		const fields: Record<string, string> = {
			name: p.name,
			surfaceY: String(p.corners[0][1]),
			orientation: 'custom',
			originDepthMm: String(p.originDepthM * 1000),
			output: p.output
		};
		p.corners.forEach((c, i) => {
			fields[`corners.${i}.x`] = String(c[0]);
			fields[`corners.${i}.z`] = String(c[2]);
		});
		p.axes.forEach((row, r) => row.forEach((v, c) => (fields[`axes.${r}.${c}`] = String(v))));
		const existing = rows.find((r) => r.name === p.name);
		const res = existing
			? await formPost(app.cookies.admin, '/lab/force-plates?/update', { id: existing.id, ...fields })
			: await formPost(app.cookies.admin, '/lab/force-plates?/create', fields);
		expect(res.status, res.text.slice(0, 400)).toBe(303);
	}
}

/** A new participant of the study with the simulation's body, consented through the e-mailed link as a participant does. */
async function consentedParticipant(): Promise<string> {
	const email = `walker.${Date.now()}@example.org`;
	const made = await formPost(app.cookies.technicianA, `/studies/${studyId}/participants/new`, {
		sex: BODY.sex,
		bodyMassKg: String(BODY.bodyMass),
		statureM: String(BODY.stature),
		birthYear: '1991',
		dominantSide: 'right',
		notes: '',
		fullName: 'Round Trip Walker',
		email,
		phone: ''
	});
	expect(made.status, made.text.slice(0, 400)).toBe(303);
	const pid = /participants\/([0-9a-f-]{36})/.exec(made.location)![1];
	const invited = await formPost(app.cookies.technicianA, `/studies/${studyId}/participants/${pid}/consent?/invite`, {});
	expect(invited.status, invited.text.slice(0, 400)).toBe(303);
	const mail = await waitForMail(email, { base: app.base });
	const token = /\/consent\/([A-Za-z0-9_-]{43})/.exec(mail.text ?? '')![1];
	const version = (
		await app.sql.query<{ id: string }>(`SELECT id FROM consent_form_versions WHERE study_id = $1 ORDER BY version DESC LIMIT 1`, [studyId])
	).rows[0].id;
	const page = await (await fetch(`${app.base}/consent/${token}`)).text();
	const confirmations = new Set([...page.matchAll(/name="(confirm-\d+)"/g)].map((m) => m[1]));
	const agreed = await formPost('', `/consent/${token}?/consent`, {
		participantId: pid,
		formVersionId: version,
		fullName: 'Round Trip Walker',
		signedOn: new Date().toISOString().slice(0, 10),
		...Object.fromEntries([...confirmations].map((c) => [c, 'yes']))
	});
	expect(agreed.status, agreed.text.slice(0, 400)).toBeLessThan(400);
	const state = (await app.sql.query(`SELECT consent_state FROM participants WHERE id = $1`, [pid])).rows[0].consent_state;
	expect(state).toBe('consented');
	return pid;
}

/** A gait session made through the session form: both legs on one moving pelvis, the simulation's hip joint centre distance. */
async function gaitSession(pid: string, t: WalkingTrial): Promise<string> {
	const r = await formPost(app.cookies.technicianA, `/studies/${studyId}/participants/${pid}/sessions/new`, {
		sessionOn: new Date().toISOString().slice(0, 10),
		operator: 'Test Operator',
		task: 'Level walking over two force plates',
		conditions: '',
		table: t.setup.table,
		limbs: ['right.leg', 'left.leg'],
		setupKind: 'pelvis',
		hipWidthMm: String(t.setup.pelvis!.hipWidthM! * 1000)
	});
	expect(r.status, r.text.slice(0, 400)).toBe(303);
	const sid = /sessions\/([0-9a-f-]{36})/.exec(r.location)![1];
	const stored = (await app.sql.query(`SELECT setup FROM sessions WHERE id = $1`, [sid])).rows[0].setup;
	expect(sessionSetupSchema.parse(stored)).toEqual(sessionSetupSchema.parse(t.setup));
	return sid;
}

async function uploadFiles(sid: string, files: { name: string; text: string }[]): Promise<{ status: number; json: any }> {
	const fd = new FormData();
	for (const f of files) fd.append('file', new Blob([f.text], { type: 'text/csv' }), f.name);
	const res = await fetch(`${app.base}/api/studies/${studyId}/sessions/${sid}/trials`, {
		method: 'POST',
		body: fd,
		headers: { cookie: app.cookies.technicianA, origin: app.base, accept: 'application/json' }
	});
	return { status: res.status, json: (await res.json()) as any };
}
async function uploadPair(sid: string, t: WalkingTrial): Promise<any> {
	const r = await uploadFiles(sid, [
		{ name: 'walk01.csv', text: t.anglesCsv },
		{ name: 'walk01.forces.csv', text: t.forcesCsv }
	]);
	expect(r.status, JSON.stringify(r.json).slice(0, 2000)).toBe(201);
	return r.json;
}

/**
 * One file with the angles and the plates' columns at the angle rate: every `ratio`-th sample of the simulation's plate
 * signals (the force sample on each angle sample) appended to the angle file's lines.
 */
function anglesWithPlates(t: WalkingTrial, rename: (name: string) => string = (n) => n): string {
	const ratio = t.forceHz / t.angleHz;
	const frames = t.sim.time.length;
	const every = (x: Float64Array | undefined, stride: number) =>
		x && Float64Array.from({ length: frames * stride }, (_, i) => x[stride * ratio * Math.floor(i / stride) + (i % stride)]);
	const plates = t.signals.map(({ plate, signals }) => ({
		plate: { ...plate, name: rename(plate.name) },
		signals: {
			force: every(signals.force, 3)!,
			moment: every(signals.moment, 3),
			cop: every(signals.cop, 3),
			freeMoment: every(signals.freeMoment, 1)
		}
	}));
	const forces = forcesCsv(t.sim.time, plates).trim().split('\n');
	const angles = t.anglesCsv.trim().split('\n');
	expect(forces.length).toBe(angles.length);
	return angles.map((line, i) => `${line},${forces[i].split(',').slice(1).join(',')}`).join('\n') + '\n';
}

async function waitForRun(runId: string, timeoutMs = 120_000) {
	const deadline = Date.now() + timeoutMs;
	for (;;) {
		const r = await api('GET', `/api/studies/${studyId}/runs/${runId}`);
		expect(r.status).toBe(200);
		if (r.json.run.state === 'done' || r.json.run.state === 'failed') return r.json.run;
		if (Date.now() > deadline) throw new Error(`run ${runId} did not settle: ${JSON.stringify(r.json.run)}`);
		await new Promise((res) => setTimeout(res, 200));
	}
}

/** The first angle sample at or after `from` whose known normal force (at the force sample on it) is at/above (or below) 20 N. */
function knownCrossing(t: WalkingTrial, plate: number, from: number, rising: boolean): number {
	const ratio = t.forceHz / t.angleHz;
	const grf = t.lab[plate].grf;
	for (let k = from; k * ratio < t.forceTime.length; k++) {
		const fy = grf[3 * k * ratio + 1];
		if (rising ? fy >= DEFAULT_CONTACT_THRESHOLD_N : fy < DEFAULT_CONTACT_THRESHOLD_N) return k;
	}
	return -1;
}

let runId: string;
let gait: any;
let sessionId: string;

beforeAll(async () => {
	trial = simulateWalkingTrial({ name: 'walk01', body: BODY });
	app = await startApp('gait_round_trip');
	studyId = app.ids.studyA;
	worker = start('worker', process.execPath, ['--import', 'tsx', 'src/cli/worker.ts'], {
		quiet: true,
		env: { ...process.env, DATABASE_URL: app.url }
	});
}, 180_000);
afterAll(async () => {
	if (worker) await stop(worker, 'SIGTERM', 5_000);
	await app?.close();
});

describe('gait round trip through the HTTP API', () => {
	it('sets up the plates, a consented walker and a gait session, takes the angle and force files, and runs them', async () => {
		await setUpPlates(trial);
		const pid = await consentedParticipant();
		const sid = (sessionId = await gaitSession(pid, trial));
		const up = await uploadPair(sid, trial);
		const angle = up.results.find((r: any) => r.fileName === 'walk01.csv');
		expect(angle.trial.force).toMatchObject({ fileName: 'walk01.forces.csv', sampleHz: 1000, plates: ['plate1', 'plate2'] });
		const started = await api('POST', `/api/studies/${studyId}/trials/${angle.trial.id}/runs`, { cutoffHz: 15 });
		expect(started.status, JSON.stringify(started.json)).toBe(201);
		runId = started.json.run.id;
		const run = await waitForRun(runId);
		expect(run.error).toBeNull();
		expect(run.state).toBe('done');
		const g = await api('GET', `/api/studies/${studyId}/runs/${runId}/gait`);
		expect(g.status).toBe(200);
		expect(g.json.gait).toBe(true);
		gait = g.json;
	}, 240_000);

	it('finds both contacts, each assigned by the model to the foot that made it and used', () => {
		expect(gait.contacts.map((c: any) => [c.id, c.foot, c.assignedBy, c.shared, c.offPlate, c.used])).toEqual([
			['plate1#0', 'right', 'model', false, false, true],
			['plate2#0', 'left', 'model', false, false, true]
		]);
		expect(gait.forces).toMatchObject({ sampleHz: 1000, angleHz: 200, ratio: 5, thresholdN: DEFAULT_CONTACT_THRESHOLD_N });
		expect(gait.plates.map((p: any) => p.name)).toEqual(['plate1', 'plate2']);
	});

	it('puts the plate events at the simulated threshold crossings within one sample', () => {
		const report: string[] = [];
		trial.stances.forEach((s, i) => {
			const plate = trial.plates.findIndex((p) => p.name === s.plate);
			const strike = knownCrossing(trial, plate, Math.floor(s.start * trial.angleHz), true);
			const off = knownCrossing(trial, plate, strike, false);
			const ev = (kind: string) => gait.events.find((e: any) => e.foot === s.foot && e.kind === kind && e.source === 'plate');
			const got = { strike: ev('strike'), off: ev('off') };
			expect(got.strike, `${s.foot} strike`).toBeTruthy();
			expect(got.off, `${s.foot} off`).toBeTruthy();
			report.push(`${s.plate} ${s.foot}: strike sample ${got.strike.sample} (known ${strike}), off ${got.off.sample} (known ${off})`);
			expect(Math.abs(got.strike.sample - strike), `${s.foot} strike ${i}`).toBeLessThanOrEqual(1);
			expect(Math.abs(got.off.sample - off), `${s.foot} off ${i}`).toBeLessThanOrEqual(1);
		});
		console.log(report.join('\n'));
	});

	it('returns the hip, knee and ankle moments equal to the known torques within the stated tolerance outside the edge zone', async () => {
		const s = await api('GET', `/api/studies/${studyId}/runs/${runId}/series?quantity=moment`);
		expect(s.status).toBe(200);
		const { sim } = trial;
		const n = sim.model.n,
			frames = sim.time.length;
		const { startSamples, endSamples } = s.json.edgeZone;
		const names = s.json.curves.map((c: any) => c.name);
		for (const side of ['right', 'left'])
			for (const dof of ['hip.flexion', 'knee.flexion', 'ankle.dorsiflexion']) expect(names).toContain(`${side}.${dof}`);
		const report: string[] = [];
		for (const c of s.json.curves) {
			const j = sim.built.dofs.findIndex((d) => d.name === c.name);
			expect(j, c.name).toBeGreaterThanOrEqual(0);
			expect(c.v.length).toBe(frames);
			const { peak, worst, worstNear } = momentErrors(
				c.v,
				(k) => sim.Q[k * n + j],
				{ from: startSamples, to: frames - endSamples },
				gait.contacts
			);
			report.push(
				`${c.name}: peak ${peak.toFixed(2)} N·m, worst ${worst.toFixed(3)} (away from contact edges), ${worstNear.toFixed(3)} near them`
			);
			expect(worst, c.name).toBeLessThan(0.025 * peak + 0.1);
			expect(worstNear, c.name).toBeLessThan(8);
		}
		console.log(report.join('\n'));
	});

	it('answers the GRF per plate equal to the known one mid-stance (N) and the CoP on the known path (m)', () => {
		const ratio = trial.forceHz / trial.angleHz;
		for (const [p, plate] of trial.plates.entries()) {
			const c = gait.contacts.find((x: any) => x.plate === plate.name);
			const mid = Math.round((c.start + c.end) / 2);
			const g = gait.grf.find((x: any) => x.plate === plate.name);
			const cop = gait.cop.find((x: any) => x.plate === plate.name);
			const known = trial.lab[p];
			(['x', 'y', 'z'] as const).forEach((a, i) => {
				// 5 N of ~700 N and 5 mm: the pure-level test's mid-stance bounds (the 15 Hz filter)
				expect(Math.abs(g[a][mid] - known.grf[3 * mid * ratio + i]), `${plate.name} F${a}`).toBeLessThan(5);
				expect(Math.abs(cop[a][mid] - known.cop[3 * mid * ratio + i]), `${plate.name} CoP ${a}`).toBeLessThan(0.005);
			});
			expect(cop.x[0]).toBeNull();
		}
	});
});

describe('an angle file with its own force-plate columns (one file, the angle rate)', () => {
	it('refuses plate columns naming a plate that is not set up: 422, the column named, nothing stored', async () => {
		const count = async () =>
			Number((await app.sql.query(`SELECT count(*) AS n FROM trials WHERE session_id = $1`, [sessionId])).rows[0].n);
		const before = await count();
		const r = await uploadFiles(sessionId, [{ name: 'walk03.csv', text: anglesWithPlates(trial, (n) => n.replace('plate', 'deck')) }]);
		expect(r.status).toBe(422);
		const p = r.json.problems.find((x: any) => x.code === 'plate-unknown');
		expect(p, JSON.stringify(r.json)).toMatchObject({ file: 'walk03.csv', row: 1, column: 'deck1.force.x (N)' });
		expect(p.message).toMatch(/names the force plate "deck1", which is not set up in the lab; the plates set up in the lab are .*plate1/);
		expect(await count()).toBe(before);
	});

	it('stores the trial with its forces from the same file and runs it: contacts assigned, moments within the same rule', async () => {
		const r = await uploadFiles(sessionId, [{ name: 'walk02.csv', text: anglesWithPlates(trial) }]);
		expect(r.status, JSON.stringify(r.json).slice(0, 2000)).toBe(201);
		const t = r.json.trial;
		expect(t.force).toMatchObject({ fileName: 'walk02.csv', sha256: t.sha256, sampleHz: 200, plates: ['plate1', 'plate2'] });
		expect(r.json.message).toMatch(/with the force plates plate1, plate2 in the same file/);
		const channels = (await app.sql.query(`SELECT channels FROM trials WHERE id = $1`, [t.id])).rows[0].channels as string[];
		expect(channels.some((c) => c.startsWith('plate'))).toBe(false);
		const started = await api('POST', `/api/studies/${studyId}/trials/${t.id}/runs`, { cutoffHz: 15 });
		expect(started.status, JSON.stringify(started.json)).toBe(201);
		const run = await waitForRun(started.json.run.id);
		expect(run.error).toBeNull();
		const g = (await api('GET', `/api/studies/${studyId}/runs/${run.id}/gait`)).json;
		expect(g.forces).toMatchObject({ fileName: 'walk02.csv', sampleHz: 200, angleHz: 200, ratio: 1 });
		expect(g.contacts.map((c: any) => [c.id, c.foot, c.used])).toEqual([
			['plate1#0', 'right', true],
			['plate2#0', 'left', true]
		]);
		const s = await api('GET', `/api/studies/${studyId}/runs/${run.id}/series?quantity=moment`);
		const { sim } = trial;
		const n = sim.model.n,
			frames = sim.time.length;
		const { startSamples, endSamples } = s.json.edgeZone;
		const report: string[] = [];
		for (const c of s.json.curves) {
			const j = sim.built.dofs.findIndex((d) => d.name === c.name);
			const { peak, worst, worstNear } = momentErrors(
				c.v,
				(k) => sim.Q[k * n + j],
				{ from: startSamples, to: frames - endSamples },
				g.contacts
			);
			report.push(
				`${c.name}: worst ${worst.toFixed(3)} N·m of ${peak.toFixed(2)} (away from contact edges), ${worstNear.toFixed(3)} near them`
			);
			expect(worst, c.name).toBeLessThan(0.025 * peak + 0.1);
			expect(worstNear, c.name).toBeLessThan(8);
		}
		console.log(report.join('\n'));
	}, 120_000);
});

describe('the export of the approved gait session', () => {
	it('holds the force file, the plates’ loads, contacts, events, cycles and spatiotemporal table as CSV; results.csv only per-DOF rows', async () => {
		const page = `/studies/${studyId}/sessions/${sessionId}`;
		const submitted = await formPost(app.cookies.researcherA, `${page}?/submit`, { note: 'Two walks over the plates.', confirm: 'yes' });
		expect(submitted.status, submitted.text.slice(0, 400)).toBe(303);
		const approved = await formPost(app.cookies.piA, `${page}?/approve`, { meaning: 'approved for analysis', password: DEMO_PASSWORD });
		expect(approved.status, approved.text.slice(0, 400)).toBe(303);
		const res = await fetch(`${app.base}/api/studies/${studyId}/sessions/${sessionId}/export`, {
			headers: { cookie: app.cookies.researcherA, accept: 'application/zip' }
		});
		expect(res.status, res.status === 200 ? '' : await res.text()).toBe(200);
		const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'momentry-gait-export-'));
		try {
			fs.writeFileSync(path.join(dir, 'x.zip'), Buffer.from(await res.arrayBuffer()));
			// python's zipfile checks every entry's CRC while extracting
			execFileSync('/usr/bin/python3', ['-m', 'zipfile', '-e', path.join(dir, 'x.zip'), path.join(dir, 'x')]);
			const read = (f: string) => fs.readFileSync(path.join(dir, 'x', f), 'utf8');
			const sha = (f: string) =>
				createHash('sha256')
					.update(fs.readFileSync(path.join(dir, 'x', f)))
					.digest('hex');
			// the raw files: both of the pair; the one-file trial once
			expect(read('raw/walk01.forces.csv')).toBe(trial.forcesCsv);
			expect(read('raw/walk01.csv')).toBe(trial.anglesCsv);
			expect(fs.existsSync(path.join(dir, 'x', 'raw/walk02.csv'))).toBe(true);
			const prov = JSON.parse(read('provenance.json'));
			const t1 = prov.trials.find((t: any) => t.fileName === 'walk01.csv');
			const t2 = prov.trials.find((t: any) => t.fileName === 'walk02.csv');
			expect(t1.forceFile).toMatchObject({ fileName: 'walk01.forces.csv', sampleHz: 1000, plates: ['plate1', 'plate2'], sameFile: false });
			expect(t1.forceFile.sha256).toBe(sha('raw/walk01.forces.csv'));
			expect(t2.forceFile).toMatchObject({ fileName: 'walk02.csv', sampleHz: 200, sameFile: true, archivePath: 'raw/walk02.csv' });
			expect(t1.run.gait.files).toEqual(
				['ground.csv', 'contacts.csv', 'events.csv', 'cycles.csv', 'spatiotemporal.csv'].map((f) => `gait/walk01/${f}`)
			);
			expect(t1.run.gait.forces).toMatchObject({ sampleHz: 1000, angleHz: 200, ratio: 5, thresholdN: DEFAULT_CONTACT_THRESHOLD_N });
			// results.csv: per-DOF rows only, every value a number
			const results = read('results.csv').trim().split('\n');
			expect(results.some((l) => /,(grf|cop|free_moment)_[xyz],/.test(l))).toBe(false);
			expect(results.slice(1).every((l) => Number.isFinite(Number(l.split(',')[9])))).toBe(true);
			// ground.csv: the stored loads at the angle rate (the gait answer rounds to 6 significant digits)
			const ground = read('gait/walk01/ground.csv').trim().split('\n');
			const head = ground[0].split(',');
			expect(head.slice(0, 5)).toEqual([
				'time (s)',
				'in_edge_zone',
				'plate1.grf_lab.x (N)',
				'plate1.grf_lab.y (N)',
				'plate1.grf_lab.z (N)'
			]);
			expect(head).toContain('plate2.cop_lab.z (m)');
			expect(head).toContain('plate1.free_moment_lab.y (N·m)');
			expect(ground).toHaveLength(1 + trial.sim.time.length);
			const col = (name: string) => ground.slice(1).map((l) => l.split(',')[head.indexOf(name)]);
			const fy = col('plate1.grf_lab.y (N)').map(Number);
			const answered = gait.grf.find((g: any) => g.plate === 'plate1').y as number[];
			fy.forEach((v, k) => expect(Math.abs(v - answered[k])).toBeLessThanOrEqual(1e-5 * Math.max(1, Math.abs(v))));
			const copX = col('plate1.cop_lab.x (m)');
			expect(copX[0]).toBe(''); // unloaded: not defined
			const c1 = gait.contacts[0];
			expect(Number(copX[Math.round((c1.start + c1.end) / 2)])).toBeGreaterThan(0);
			// contacts, events, cycles, spatiotemporal table: the gait answer's, row for row
			const contacts = read('gait/walk01/contacts.csv').trim().split('\n');
			expect(contacts[0]).toBe(
				'contact,plate,foot,assigned_by,start (s),end (s),start_sample,end_sample,shared,off_plate,clipped,used,not_used_because'
			);
			expect(contacts.slice(1).map((l) => l.split(',').slice(0, 3))).toEqual([
				['plate1#0', 'plate1', 'right'],
				['plate2#0', 'plate2', 'left']
			]);
			const events = read('gait/walk01/events.csv').trim().split('\n');
			expect(events[0]).toBe('foot,event,time (s),sample,source');
			expect(events.slice(1).map((l) => l.split(',')[3])).toEqual(gait.events.map((e: any) => String(e.sample)));
			const cycles = read('gait/walk01/cycles.csv').trim().split('\n');
			expect(cycles).toHaveLength(1 + gait.cycles.length);
			expect(cycles[0].split(',').slice(0, 6)).toEqual(['foot', 'cycle', 'start (s)', 'end (s)', 'foot_off (s)', 'cycle_time (s)']);
			const st = read('gait/walk01/spatiotemporal.csv').trim().split('\n');
			expect(st[0]).toBe('foot,parameter,unit,mean,sd,cycles');
			const cadence = st.find((l) => l.startsWith('right,cadence,'))!.split(',');
			expect(cadence[2]).toBe('steps/min');
			expect(cadence[3]).toBe(String(gait.spatiotemporal.right.cadence.mean ?? ''));
			expect(read('README.txt')).toContain('gait/<trial>/');
		} finally {
			fs.rmSync(dir, { recursive: true, force: true });
		}
	}, 120_000);
});
