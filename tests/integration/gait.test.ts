// Force recordings with trials and gait runs through the HTTP API: an angle file and its force file uploaded together
// and kept byte for byte; bad force files each refused with a precise message and nothing stored (trials, raw uploads
// and chunks counted before and after), the refusal audited.
/* eslint-disable @typescript-eslint/no-explicit-any -- JSON answers are read loosely here; their shapes are what the assertions check */
import { beforeAll, describe, expect, it } from 'vitest';
import { browserRequests, LEG, sha, useApp } from './app-under-test';

const app = useApp('gait');
const http = browserRequests(app);

/** A right-leg angle recording at `hz` (degrees), `seconds` long, starting at `t0`. */
function angleCsv(hz: number, seconds: number, phase = 0, t0 = 0): Buffer {
	const lines = [['time (s)', ...LEG.map((c) => `${c} (deg)`)].join(',')];
	const n = Math.round(seconds * hz);
	for (let k = 0; k < n; k++) {
		const t = t0 + k / hz;
		const a = Math.sin(2 * Math.PI * 0.5 * t + phase);
		lines.push(
			[t.toFixed(4), 20 + 10 * a, 2 * a, a, 45 + 30 * a, 5 * a, a].map((v) => (typeof v === 'string' ? v : v.toFixed(6))).join(',')
		);
	}
	return Buffer.from(lines.join('\n') + '\n');
}

interface ForceFileOptions {
	hz?: number;
	seconds?: number;
	t0?: number;
	plate?: string;
	/** CoP in plate axes (m, from the plate's centre) during the contact */
	cop?: [number, number];
	/** leave this column out */
	drop?: string;
	/** write "NaN" into this column on the line of this sample */
	nanAt?: { column: string; sample: number };
}

/**
 * A forces-moments plate's file (plate1 of the demo lab: origin 0.04 m below the surface): one half-sine contact
 * from 0.5 s to 1.1 s, 700 N peak, straight down, at a fixed CoP (x, y) on the surface; the moments about the
 * measuring origin from M = r × F with r = (x, y, −d) (docs/processing.md, "Force plates").
 */
function forceCsv(o: ForceFileOptions = {}): Buffer {
	const hz = o.hz ?? 1000,
		seconds = o.seconds ?? 2,
		p = o.plate ?? 'plate1',
		[x, y] = o.cop ?? [0.05, 0.02];
	const cols = ['force.x (N)', 'force.y (N)', 'force.z (N)', 'moment.x (N·m)', 'moment.y (N·m)', 'moment.z (N·m)'].map((c) => `${p}.${c}`);
	const keep = cols.map((c) => !o.drop || !c.startsWith(o.drop + ' '));
	const lines = [['time (s)', ...cols.filter((_, i) => keep[i])].join(',')];
	const n = Math.round(seconds * hz);
	for (let k = 0; k < n; k++) {
		const t = (o.t0 ?? 0) + k / hz;
		const fz = t > 0.5 && t < 1.1 ? 700 * Math.sin((Math.PI * (t - 0.5)) / 0.6) : 0;
		const r = [0, 0, fz, y * fz, -x * fz, 0].map((v, i) =>
			o.nanAt && o.nanAt.sample === k && cols[i].startsWith(o.nanAt.column + ' ') ? 'NaN' : v.toFixed(4)
		);
		lines.push([t.toFixed(4), ...r.filter((_, i) => keep[i])].join(','));
	}
	return Buffer.from(lines.join('\n') + '\n');
}

let studyA: string;
let session: string;

async function upload(sid: string, files: { name: string; bytes: Uint8Array }[], fields: Record<string, string> = {}) {
	const fd = new FormData();
	for (const [k, v] of Object.entries(fields)) fd.append(k, v);
	for (const f of files) fd.append('file', new Blob([f.bytes as Uint8Array<ArrayBuffer>], { type: 'text/csv' }), f.name);
	const res = await fetch(`${app.base}/api/studies/${studyA}/sessions/${sid}/trials`, {
		method: 'POST',
		body: fd,
		headers: { cookie: app.cookies.technicianA, origin: app.base, accept: 'application/json' }
	});
	return { status: res.status, body: (await res.json()) as Record<string, any> };
}

const counts = async () =>
	(
		await app.sql.query<{ t: string; u: string; c: string }>(
			`SELECT (SELECT count(*) FROM trials) t, (SELECT count(*) FROM raw_uploads) u, (SELECT count(*) FROM raw_upload_chunks) c`
		)
	).rows[0];

async function newSession(limbs: string[], extra: Record<string, string> = {}): Promise<string> {
	const form: Record<string, string> = {
		sessionOn: '2026-11-03',
		operator: 'T. Okafor',
		task: 'Level walking',
		conditions: '',
		table: 'de-leva-1996',
		limbs: limbs[0],
		...extra
	};
	const res = await http.post(`/studies/${studyA}/participants/${app.ids.participantA}/sessions/new`, app.cookies.technicianA, form);
	expect(res.status).toBe(303);
	return /\/sessions\/([0-9a-f-]{36})/.exec(res.headers.get('location') ?? '')![1];
}

beforeAll(async () => {
	studyA = app.ids.studyA;
	session = await newSession(['right.leg']);
}, 60_000);

describe('a trial with a force file', () => {
	it('is stored with its force file when the two come together (paired by name), both kept byte for byte', async () => {
		const before = await counts();
		const angles = angleCsv(200, 2, 0.3);
		const forces = forceCsv();
		const r = await upload(session, [
			{ name: 'walk01.csv', bytes: angles },
			{ name: 'walk01.forces.csv', bytes: forces }
		]);
		expect(r.status, JSON.stringify(r.body)).toBe(201);
		const [a, f] = r.body.results;
		expect(a).toMatchObject({ fileName: 'walk01.csv', status: 201, pairedWith: { role: 'force', fileName: 'walk01.forces.csv' } });
		expect(a.trial.force).toEqual({ fileName: 'walk01.forces.csv', sha256: sha(forces), sampleHz: 1000, plates: ['plate1'] });
		expect(f).toMatchObject({ fileName: 'walk01.forces.csv', status: 201, pairedWith: { role: 'angle', fileName: 'walk01.csv' } });
		const after = await counts();
		expect(Number(after.t) - Number(before.t)).toBe(1);
		expect(Number(after.u) - Number(before.u)).toBe(2);
		const row = (
			await app.sql.query(
				`SELECT t.force_file_name, t.force_sha256, t.force_sample_hz, t.force_plates, t.sample_hz, u.byte_size FROM trials t JOIN raw_uploads u ON u.id = t.force_raw_upload_id WHERE t.id = $1`,
				[a.trial.id]
			)
		).rows[0];
		expect(row).toMatchObject({
			force_file_name: 'walk01.forces.csv',
			force_sha256: sha(forces),
			force_sample_hz: 1000,
			force_plates: ['plate1'],
			sample_hz: 200
		});
		expect(Number(row.byte_size)).toBe(forces.length);
		const stored = await app.sql.query<{ bytes: Buffer }>(
			`SELECT c.bytes FROM raw_upload_chunks c JOIN trials t ON t.force_raw_upload_id = c.upload_id WHERE t.id = $1 ORDER BY c.seq`,
			[a.trial.id]
		);
		expect(sha(Buffer.concat(stored.rows.map((x) => x.bytes)))).toBe(sha(forces));
	});

	it('is paired by a form field naming the angle file, the force file sent first', async () => {
		const r = await upload(
			session,
			[
				{ name: 'plates-trial2.csv', bytes: forceCsv() },
				{ name: 'walk02.csv', bytes: angleCsv(200, 2, 0.6) }
			],
			{ 'forcesFor.plates-trial2.csv': 'walk02.csv' }
		);
		expect(r.status, JSON.stringify(r.body)).toBe(201);
		expect(r.body.results.map((o: any) => [o.fileName, o.status])).toEqual([
			['walk02.csv', 201],
			['plates-trial2.csv', 201]
		]);
		expect(r.body.results[0].trial.force.fileName).toBe('plates-trial2.csv');
	});
});

describe('bad force files', () => {
	// each: the angle file is good; the force file has one defect; the pair is refused with the message and nothing is stored
	const cases: { name: string; forces: () => Buffer; code: string; message: RegExp; row?: number; column?: string }[] = [
		{
			name: 'a force rate that is not a whole multiple of the angle rate',
			forces: () => forceCsv({ hz: 900 }),
			code: 'force-rate-ratio',
			message: /walk09\.forces\.csv.*walk09\.csv.*cannot be paired/
		},
		{
			name: 'a missing component',
			forces: () => forceCsv({ drop: 'plate1.moment.z' }),
			code: '',
			message: /plate1\.moment\.z/
		},
		{
			name: 'a NaN cell during a contact',
			forces: () => forceCsv({ nanAt: { column: 'plate1.force.z', sample: 800 } }),
			code: '',
			message: /802/,
			row: 802,
			column: 'plate1.force.z (N)'
		},
		{
			name: 'a plate that is not set up in the lab',
			forces: () => forceCsv({ plate: 'plate9' }),
			code: 'plate-unknown',
			message:
				/Column "plate9\.force\.x \(N\)" .*"plate9", which is not set up in the lab; the plates set up in the lab are plate1, plate2/,
			row: 1,
			column: 'plate9.force.x (N)'
		},
		{
			name: 'a centre of pressure off the plate during a contact',
			forces: () => forceCsv({ cop: [0.45, 0.02] }),
			code: 'cop-off-plate',
			message: /line \d+ \(0\.5\d* s\): the centre of pressure of plate "plate1" lies 150 mm outside the plate/
		},
		{
			name: 'a start time that does not match the angle file',
			forces: () => forceCsv({ t0: 0.1 }),
			code: 'force-start',
			message: /starts at 0\.1 s and the angle file "walk09\.csv" at 0 s/
		}
	];
	for (const c of cases) {
		it(`refuses ${c.name}: 422, the precise message, nothing stored, the refusal audited`, async () => {
			const before = await counts();
			const auditsBefore = (await app.sql.query(`SELECT count(*) n FROM audit_events WHERE action = 'trial.rejected'`)).rows[0].n;
			const r = await upload(session, [
				{ name: 'walk09.csv', bytes: angleCsv(200, 2, 1.1) },
				{ name: 'walk09.forces.csv', bytes: c.forces() }
			]);
			expect(r.status, JSON.stringify(r.body)).toBe(422);
			const [a, f] = r.body.results;
			expect(a.status).toBe(422);
			expect(f).toMatchObject({ fileName: 'walk09.forces.csv', status: 422 });
			const problems = a.problems as { file: string; code: string; message: string; row?: number; column?: string }[];
			const hit = problems.find((p) => c.message.test(p.message));
			expect(hit, JSON.stringify(problems)).toBeTruthy();
			expect(hit!.file).toBe('walk09.forces.csv');
			if (c.code) expect(hit!.code).toBe(c.code);
			if (c.row) expect(hit!.row).toBe(c.row);
			if (c.column) expect(hit!.column).toBe(c.column);
			expect(await counts()).toEqual(before);
			const auditsAfter = (await app.sql.query(`SELECT count(*) n FROM audit_events WHERE action = 'trial.rejected'`)).rows[0].n;
			expect(Number(auditsAfter) - Number(auditsBefore)).toBe(1);
		});
	}

	it('refuses a force file whose angle file did not come with it', async () => {
		const before = await counts();
		const r = await upload(session, [
			{ name: 'walk77.forces.csv', bytes: forceCsv() },
			{ name: 'walk78.csv', bytes: angleCsv(200, 2, 2.2) }
		]);
		expect(r.status).toBe(207);
		const f = r.body.results.find((o: any) => o.fileName === 'walk77.forces.csv');
		expect(f.status).toBe(422);
		expect(f.message).toContain('no angle file of that name came with it');
		expect(Number((await counts()).t) - Number(before.t)).toBe(1);
	});
});

describe('a gait session through the session form', () => {
	const gaitForm = (extra: Record<string, string>) => {
		const form = new URLSearchParams({
			sessionOn: '2026-11-04',
			operator: 'T. Okafor',
			task: 'Level walking, comfortable speed',
			conditions: '',
			table: 'de-leva-1996',
			setupKind: 'pelvis',
			// a per-limb base left in the form is not read with a pelvis
			'base.right.leg': 'moving',
			...extra
		});
		form.append('limbs', 'right.leg');
		form.append('limbs', 'left.leg');
		return fetch(`${app.base}/studies/${studyA}/participants/${app.ids.participantA}/sessions/new`, {
			method: 'POST',
			body: form,
			redirect: 'manual',
			headers: {
				cookie: app.cookies.technicianA,
				origin: app.base,
				accept: 'text/html',
				'content-type': 'application/x-www-form-urlencoded'
			}
		});
	};

	it('is created with both legs on one moving pelvis and the hip joint centre distance entered in mm (stored in m)', async () => {
		const res = await gaitForm({ hipWidthMm: '182' });
		expect(res.status).toBe(303);
		const sid = /\/sessions\/([0-9a-f-]{36})/.exec(res.headers.get('location') ?? '')![1];
		const row = (await app.sql.query(`SELECT setup FROM sessions WHERE id = $1`, [sid])).rows[0];
		expect(row.setup).toMatchObject({ limbs: ['right.leg', 'left.leg'], bases: {}, pelvis: { hipWidthM: 0.182 } });
		// the session page lists the pelvis columns among those a file must contain
		const page = await (await http.get(`/studies/${studyA}/sessions/${sid}`, app.cookies.technicianA)).text();
		for (const c of ['pelvis.px', 'pelvis.py', 'pelvis.pz', 'pelvis.rx', 'pelvis.ry', 'pelvis.rz'])
			expect(page).toContain(`<code>${c}</code>`);
		expect(page).toContain('182 mm apart (entered)');
	});

	it('refuses a hip joint centre distance out of range under its field, and stores nothing', async () => {
		const before = (await app.sql.query(`SELECT count(*) n FROM sessions`)).rows[0].n;
		const res = await gaitForm({ hipWidthMm: '18' });
		expect(res.status).toBe(400);
		const html = await res.text();
		expect(html).toContain('Enter the distance between the hip joint centres from 100 to 500 mm');
		expect((await app.sql.query(`SELECT count(*) n FROM sessions`)).rows[0].n).toBe(before);
	});
});

describe('feet set by hand (contactFeet) when a run starts', () => {
	let trialId: string;
	const start = (options: unknown) =>
		fetch(`${app.base}/api/studies/${studyA}/trials/${trialId}/runs`, {
			method: 'POST',
			body: JSON.stringify(options),
			headers: { cookie: app.cookies.technicianA, origin: app.base, accept: 'application/json', 'content-type': 'application/json' }
		});
	const runs = async () => Number((await app.sql.query(`SELECT count(*) n FROM runs WHERE trial_id = $1`, [trialId])).rows[0].n);

	beforeAll(async () => {
		const r = await upload(session, [
			{ name: 'walk30.csv', bytes: angleCsv(200, 2, 1.7) },
			{ name: 'walk30.forces.csv', bytes: forceCsv() }
		]);
		expect(r.status, JSON.stringify(r.body)).toBe(201);
		trialId = r.body.results[0].trial.id;
	}, 60_000);

	it('refuses a contact id that does not exist, naming it and the contacts there are; nothing is started', async () => {
		const before = await runs();
		const res = await start({ cutoffHz: 6, contactFeet: { 'plate1#3': 'left' } });
		expect(res.status).toBe(400);
		const body = (await res.json()) as { message: string; errors?: Record<string, string> };
		const text = body.errors?.contactFeet ?? body.message;
		// the force file has one contact on plate1 (0.5 s to 1.1 s): its id is plate1#0
		expect(text).toMatch(/"plate1#3" is not a contact of trial walk30\.csv; at this force cutoff its contacts are plate1#0\./);
		expect(await runs()).toBe(before);
	});

	it('refuses an id naming no plate of the trial and a foot that is not left or right', async () => {
		type Refusal = { errors: Record<string, string> };
		const bad = await start({ cutoffHz: 6, contactFeet: { 'plate2#0': 'right' } });
		expect(bad.status).toBe(400);
		expect(((await bad.json()) as Refusal).errors.contactFeet).toMatch(
			/"plate2#0" is not a contact of trial walk30\.csv.*a plate of its force file \(plate1\)/
		);
		const foot = await start({ cutoffHz: 6, contactFeet: { 'plate1#0': 'middle' } });
		expect(foot.status).toBe(400);
		expect(((await foot.json()) as Refusal).errors.contactFeet).toBe(
			'contactFeet["plate1#0"]: the foot must be "left", "right" or null (no foot).'
		);
	});
});
