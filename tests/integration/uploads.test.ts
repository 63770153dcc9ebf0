// Sessions and the streamed trial upload against the built app: the malformed corpus refused with precise messages and
/* eslint-disable @typescript-eslint/no-explicit-any -- JSON answers are read loosely here; their shapes are what the assertions check */
// nothing stored, binary and empty files, the size limit, duplicates, byte-identical storage, mapping presets, consent.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import { randomBytes } from 'node:crypto';
import { LEG, sha, startApp, type AppUnderTest } from './app-under-test';
import { detectDelimiter } from '../../src/lib/processing/recording';

const MALFORMED = 'tests/fixtures/recordings/malformed/';
const corpus = JSON.parse(fs.readFileSync(MALFORMED + 'index.json', 'utf8')) as Record<
	string,
	{ code: string; expected: string[]; options?: { fillGaps?: boolean } }
>;
/** A real right-leg recording with all six channels (simulated demo trial). */
const KNEE_FILE = 'seeds/recordings/kne-001-seated-knee-extension.csv';
const SHELF_FILE = 'seeds/recordings/ald-001-shelf-reach.csv';
const LEG_MOVING = [
	'right.leg.base.px',
	'right.leg.base.py',
	'right.leg.base.pz',
	'right.leg.base.rx',
	'right.leg.base.ry',
	'right.leg.base.rz',
	...LEG
];

let app: AppUnderTest;
let studyA: string;
let studyB: string;
let ald001: string;
let legSession: string;
let movingSession: string;

/** A form post as a browser sends it without JavaScript. */
const formPost = (path: string, cookie: string, form: URLSearchParams) =>
	fetch(app.base + path, {
		method: 'POST',
		body: form,
		redirect: 'manual',
		headers: { cookie, origin: app.base, accept: 'text/html', 'content-type': 'application/x-www-form-urlencoded' }
	});

async function createSession(
	participantId: string,
	cookie: string,
	extra: Record<string, string> = {},
	limbs = ['right.leg']
): Promise<Response> {
	const form = new URLSearchParams({
		sessionOn: '2026-11-02',
		operator: 'T. Okafor',
		task: 'Seated knee extension',
		conditions: '',
		table: 'de-leva-1996',
		...extra
	});
	for (const l of limbs) form.append('limbs', l);
	return formPost(`/studies/${studyA}/participants/${participantId}/sessions/new`, cookie, form);
}
const sessionIdOf = (res: Response) => /\/sessions\/([0-9a-f-]{36})/.exec(res.headers.get('location') ?? '')?.[1] ?? '';

interface Sent {
	name: string;
	bytes: Uint8Array;
}
/** POSTs files (after the fields) as multipart/form-data. */
async function upload(
	sid: string,
	files: Sent[],
	fields: Record<string, string> = {},
	opts: { cookie?: string; accept?: string; study?: string } = {}
) {
	const fd = new FormData();
	for (const [k, v] of Object.entries(fields)) fd.append(k, v);
	for (const f of files) fd.append('file', new Blob([f.bytes as Uint8Array<ArrayBuffer>], { type: 'text/csv' }), f.name);
	const res = await fetch(`${app.base}/api/studies/${opts.study ?? studyA}/sessions/${sid}/trials`, {
		method: 'POST',
		body: fd,
		redirect: 'manual',
		headers: { cookie: opts.cookie ?? app.cookies.technicianA, origin: app.base, accept: opts.accept ?? 'application/json' }
	});
	return res;
}
async function uploadJson(sid: string, files: Sent[], fields: Record<string, string> = {}, opts: { cookie?: string; study?: string } = {}) {
	const res = await upload(sid, files, fields, opts);
	const text = await res.text();
	let body: Record<string, any> = {};
	try {
		body = JSON.parse(text);
	} catch {
		body = { message: text };
	}
	return { status: res.status, body };
}

const counts = async () => {
	const r = await app.sql.query<{ t: string; u: string; c: string; r: string }>(
		`SELECT (SELECT count(*) FROM trials) t, (SELECT count(*) FROM raw_uploads) u, (SELECT count(*) FROM raw_upload_chunks) c, (SELECT count(*) FROM runs) r`
	);
	return r.rows[0];
};

/**
 * The corpus files name only three leg channels, while a right-leg session model has six; so that each file is
 * refused for its own defect (not for the three absent channels), the absent ones are inserted after the first
 * column with the file's own delimiter, as zeros, which leaves each file's defect where it was.
 */
function widen(buf: Buffer, named: string[], expected: string[]): Buffer {
	const text = buf.toString('utf8');
	if (!/time/i.test(text.slice(0, 200)) || text.includes('\uFFFD') || text.includes('\u0000')) return buf;
	const missing = expected.filter((c) => !named.includes(c));
	const parts = text.split(/(\r?\n)/);
	const headerIdx = parts.findIndex((p, i) => i % 2 === 0 && p.trim() !== '');
	if (headerIdx < 0 || missing.length === 0) return buf;
	const d = detectDelimiter(parts[headerIdx]);
	return Buffer.from(
		parts
			.map((p, i) => {
				if (i % 2 === 1 || p.trim() === '' || i < headerIdx) return p;
				const at = p.indexOf(d);
				if (at < 0) return p;
				const extra = i === headerIdx ? missing.map((m) => `${m} (${m.includes('.base.p') ? 'm' : 'deg'})`) : missing.map(() => '0');
				return p.slice(0, at) + extra.map((e) => d + e).join('') + p.slice(at);
			})
			.join(''),
		'utf8'
	);
}

/** A valid right-leg recording of `rows` samples at 1 kHz (angles as °, six decimals, as the demo files). */
function legCsv(rows: number, phase = 0, header = ['time (s)', ...LEG.map((c) => `${c} (deg)`)]): Buffer {
	const lines = [header.join(',')];
	for (let k = 0; k < rows; k++) {
		const t = k / 1000;
		const a = Math.sin(2 * Math.PI * 0.5 * t + phase);
		lines.push(
			[
				t.toFixed(3),
				(20 + 10 * a).toFixed(6),
				(2 * a).toFixed(6),
				(1 * a).toFixed(6),
				(45 + 30 * a).toFixed(6),
				(5 * a).toFixed(6),
				(1 * a).toFixed(6)
			].join(',')
		);
	}
	return Buffer.from(lines.join('\n') + '\n');
}

beforeAll(async () => {
	app = await startApp('uploads');
	// if the app dies, say why (its output is otherwise kept quiet)
	void app.app.exited.then((code) => console.error(`[app exited with ${code}]\n${app.app.tail.join('\n')}`));
	({ studyA, studyB } = app.ids);
	ald001 = app.ids.participantA;
	const a = await createSession(ald001, app.cookies.technicianA);
	expect(a.status).toBe(303);
	legSession = sessionIdOf(a);
	const b = await createSession(ald001, app.cookies.technicianA, { 'base.right.leg': 'moving' });
	movingSession = sessionIdOf(b);
	expect(legSession && movingSession).toBeTruthy();
}, 120_000);
afterAll(async () => app?.close());

describe('sessions', () => {
	it('are created with their set-up (limbs, base, table, loads) and listed on the participant page', async () => {
		const res = await createSession(ald001, app.cookies.piA, {
			'base.right.leg': 'thigh-on-seat',
			'load.0.limb': 'right.leg',
			'load.0.segment': 'shank',
			'load.0.massKg': '1.5',
			'load.0.point': '0, -0.35, 0',
			'load.0.label': 'ankle weight'
		});
		expect(res.status).toBe(303);
		const sid = sessionIdOf(res);
		const row = (await app.sql.query(`SELECT state, setup, operator FROM sessions WHERE id = $1`, [sid])).rows[0];
		expect(row.state).toBe('draft');
		expect(row.setup).toMatchObject({
			table: 'de-leva-1996',
			limbs: ['right.leg'],
			bases: { 'right.leg': { kind: 'fixed', orientation: 'thigh-on-seat' } },
			loads: [{ limb: 'right.leg', segment: 'shank', massKg: 1.5, pointM: [0, -0.35, 0], label: 'ankle weight' }]
		});
		const page = await (
			await fetch(`${app.base}/studies/${studyA}/participants/${ald001}`, { headers: { cookie: app.cookies.researcherA } })
		).text();
		expect(page).toContain(`/studies/${studyA}/sessions/${sid}`);
		const audit = await app.sql.query(`SELECT 1 FROM audit_events WHERE action = 'session.created' AND record_id = $1`, [sid]);
		expect(audit.rowCount).toBe(1);
	});

	it('refuse a set-up the model cannot take, naming the field', async () => {
		const noLimb = await createSession(ald001, app.cookies.technicianA, {}, []);
		expect(noLimb.status).toBe(400);
		expect(await noLimb.text()).toContain('Choose at least one limb');
		const seatedArm = await createSession(ald001, app.cookies.technicianA, { 'base.right.arm': 'thigh-on-seat' }, ['right.arm']);
		expect(seatedArm.status).toBe(400);
		expect(await seatedArm.text()).toContain('applies to a leg');
		const wrongSegment = await createSession(ald001, app.cookies.technicianA, {
			'load.0.limb': 'right.leg',
			'load.0.segment': 'hand',
			'load.0.massKg': '2',
			'load.0.point': '0,0,0'
		});
		expect(wrongSegment.status).toBe(400);
		expect(await wrongSegment.text()).toContain('right.leg has no hand');
	});

	it('take a base rotation matrix typed to 6 decimals (stored orthonormal), and refuse one off by 1e-3 or a reflection with the numbers', async () => {
		// Rz(30°): cos 30° = 0.866025…, sin 30° = 0.5 (rounded to 6 decimals as a person types them)
		const typed = '0.866025, -0.5, 0; 0.5, 0.866025, 0; 0, 0, 1';
		const ok = await createSession(ald001, app.cookies.technicianA, { 'base.right.leg': 'custom', 'cardan.right.leg': typed });
		expect(ok.status).toBe(303);
		const setup = (await app.sql.query(`SELECT setup FROM sessions WHERE id = $1`, [sessionIdOf(ok)])).rows[0].setup;
		const R = setup.bases['right.leg'].rotationMatrix as number[][];
		// M = [[a, −b], [b, a]] ⊕ 1 is √(a² + b²) times a rotation: its nearest rotation (polar factor) is M / √(a² + b²)
		const norm = Math.hypot(0.866025, 0.5);
		expect(R[0][0]).toBeCloseTo(0.866025 / norm, 12);
		expect(R[1][0]).toBeCloseTo(0.5 / norm, 12);
		expect(R[0][1]).toBeCloseTo(-0.5 / norm, 12);
		expect(R[2][2]).toBeCloseTo(1, 12);
		let off = 0;
		for (let r = 0; r < 3; r++)
			for (let c = 0; c < 3; c++) off += (R[0][r] * R[0][c] + R[1][r] * R[1][c] + R[2][r] * R[2][c] - (r === c ? 1 : 0)) ** 2;
		expect(Math.sqrt(off)).toBeLessThan(1e-12);
		const wrong = await createSession(ald001, app.cookies.technicianA, {
			'base.right.leg': 'custom',
			'cardan.right.leg': '0.867025, -0.5, 0; 0.5, 0.866025, 0; 0, 0, 1'
		});
		expect(wrong.status).toBe(400);
		expect(await wrong.text()).toMatch(/is 0\.00\d+, more than the tolerance 1\.00e-5/);
		const mirror = await createSession(ald001, app.cookies.technicianA, {
			'base.right.leg': 'custom',
			'cardan.right.leg': '0.866025, -0.5, 0; 0.5, 0.866025, 0; 0, 0, -1'
		});
		expect(mirror.status).toBe(400);
		expect(await mirror.text()).toMatch(/determinant is -1, negative: an improper rotation/);
	});

	it('cannot be created for a participant without valid consent', async () => {
		const ald005 = (await app.sql.query(`SELECT id FROM participants WHERE code = 'ALD-005'`)).rows[0].id;
		const res = await createSession(ald005, app.cookies.technicianA);
		expect(res.status).toBe(409);
		expect(await res.text()).toContain('ALD-005 has not given consent (state: invited)');
	});

	it('show the set-up and the channels a file must contain on the session page', async () => {
		const html = await (
			await fetch(`${app.base}/studies/${studyA}/sessions/${movingSession}`, { headers: { cookie: app.cookies.researcherA } })
		).text();
		expect(html).toContain('moving (from the file’s base columns)');
		for (const c of LEG_MOVING) expect(html).toContain(c);
	});
});

describe('the malformed corpus', () => {
	it('is refused file by file with a 4xx naming the problem, and nothing of it is stored', async () => {
		const before = await counts();
		const rejectedBefore = Number((await app.sql.query(`SELECT count(*) n FROM audit_events WHERE action = 'trial.rejected'`)).rows[0].n);
		const files = Object.entries(corpus);
		expect(files.length).toBeGreaterThanOrEqual(25);
		for (const [name, spec] of files) {
			const moving = spec.expected.some((c) => c.includes('.base.'));
			const bytes = widen(fs.readFileSync(MALFORMED + name), spec.expected, moving ? LEG_MOVING : LEG);
			const { status, body } = await uploadJson(
				moving ? movingSession : legSession,
				[{ name, bytes }],
				spec.options?.fillGaps ? { fillGaps: 'on' } : {}
			);
			expect(status, `${name}: ${JSON.stringify(body).slice(0, 300)}`).toBeGreaterThanOrEqual(400);
			expect(status, name).toBeLessThan(500);
			expect(body.message, name).toMatch(new RegExp(name.replace(/\./g, '\\.')));
			const codes = (body.problems ?? []).map((p: { code: string }) => p.code);
			expect(codes, name).toContain(spec.code);
			for (const p of body.problems) {
				expect(p.file).toBe(name);
				expect(p.message.length).toBeGreaterThan(10);
			}
		}
		expect(await counts()).toEqual(before);
		const rejectedAfter = Number((await app.sql.query(`SELECT count(*) n FROM audit_events WHERE action = 'trial.rejected'`)).rows[0].n);
		expect(rejectedAfter - rejectedBefore).toBe(files.length);
	}, 120_000);

	it('names the row and column of a defect inside the data (truncated last line, non-numeric cell)', async () => {
		const t = await uploadJson(legSession, [
			{
				name: 'truncated-last-line.csv',
				bytes: widen(fs.readFileSync(MALFORMED + 'truncated-last-line.csv'), corpus['truncated-last-line.csv'].expected, LEG)
			}
		]);
		expect(t.status).toBe(422);
		const p = t.body.problems.find((x: { code: string }) => x.code === 'truncated-last-line');
		expect(p.row).toBeGreaterThan(1);
		const n = await uploadJson(legSession, [
			{
				name: 'non-numeric-cell.csv',
				bytes: widen(fs.readFileSync(MALFORMED + 'non-numeric-cell.csv'), corpus['non-numeric-cell.csv'].expected, LEG)
			}
		]);
		const q = n.body.problems.find((x: { code: string }) => x.code === 'non-numeric');
		expect(q.row).toBeGreaterThan(1);
		expect(q.column).toBeTruthy();
	});

	it('refuses a value no recording can hold (1e308 in a cell; 1e-400) with 422 naming file, line and column, storing nothing', async () => {
		const before = await counts();
		for (const [cell, text] of [
			['1e308', /"1e308" \(deg\) is 1e\+308°, beyond the hard limit of ±720°/],
			['1e-400', /underflow/]
		] as const) {
			const lines = legCsv(60).toString('utf8').split('\n');
			const cells = lines[25].split(',');
			cells[4] = cell; // line 26, column 5: right.knee.flexion (deg)
			lines[25] = cells.join(',');
			const { status, body } = await uploadJson(legSession, [{ name: 'spiked.csv', bytes: Buffer.from(lines.join('\n')) }]);
			expect(status, JSON.stringify(body).slice(0, 300)).toBe(422);
			expect(body.message).toContain('spiked.csv');
			expect(body.problems).toHaveLength(1);
			expect(body.problems[0]).toMatchObject({
				file: 'spiked.csv',
				row: 26,
				column: 'right.knee.flexion (deg)',
				code: 'impossible-value',
				severity: 'error'
			});
			expect(body.problems[0].message).toContain(`Line 26, column 5 ("right.knee.flexion (deg)"): "${cell}"`);
			expect(body.problems[0].message).toMatch(text);
		}
		expect(await counts()).toEqual(before);
	});

	it('keeps the file name, size, hash and problem codes of a rejected file in the audit log', async () => {
		const bytes = fs.readFileSync(MALFORMED + 'binary-garbage.csv');
		await uploadJson(legSession, [{ name: 'binary-garbage.csv', bytes }]);
		const row = (await app.sql.query(`SELECT details, outcome FROM audit_events WHERE action = 'trial.rejected' ORDER BY id DESC LIMIT 1`))
			.rows[0];
		expect(row.outcome).toBe('failed');
		expect(row.details).toMatchObject({
			fileName: 'binary-garbage.csv',
			byteSize: bytes.length,
			sha256: sha(bytes),
			problems: ['not-text'],
			status: 422
		});
	});
});

describe('bad input never answers 5xx', () => {
	it('random binary bytes, an empty file, no file, a malformed multipart body', async () => {
		const before = await counts();
		const garbage = await uploadJson(legSession, [{ name: 'noise.bin', bytes: randomBytes(64 * 1024) }]);
		expect(garbage.status).toBe(422);
		expect(garbage.body.message).toContain('noise.bin');
		const empty = await uploadJson(legSession, [{ name: 'empty.csv', bytes: new Uint8Array(0) }]);
		expect(empty.status).toBe(422);
		expect(empty.body.problems[0].code).toBe('empty-file');
		const noFile = await uploadJson(legSession, [], { note: 'no file here' });
		expect(noFile.status).toBe(400);
		expect(noFile.body.message).toMatch(/No file was sent/);
		const headers = { cookie: app.cookies.technicianA, origin: app.base, accept: 'application/json' };
		const url = `${app.base}/api/studies/${studyA}/sessions/${legSession}/trials`;
		const broken = await fetch(url, {
			method: 'POST',
			headers: { ...headers, 'content-type': 'multipart/form-data; boundary=XYZ' },
			body: '--XYZ\r\nContent-Disposition: form-data; name="file"; filename="a.csv"\r\n\r\ntime,a\n0,1\n'
		});
		expect(broken.status).toBe(400);
		expect((await broken.json()).message).toMatch(/multipart/);
		const noBoundary = await fetch(url, {
			method: 'POST',
			headers: { ...headers, 'content-type': 'multipart/form-data' },
			body: 'whatever'
		});
		expect(noBoundary.status).toBe(400);
		const notMultipart = await fetch(url, { method: 'POST', headers: { ...headers, 'content-type': 'text/csv' }, body: 'time,a\n0,1\n' });
		expect(notMultipart.status).toBe(415);
		expect(await counts()).toEqual(before);
	});

	it('a file one byte over the 100 MB limit is refused with 413 and a clear message, streamed', async () => {
		const before = await counts();
		const limit = 104_857_600;
		const boundary = 'momentry-test-boundary';
		const head = Buffer.from(
			`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="huge.csv"\r\nContent-Type: text/csv\r\n\r\n`
		);
		const tail = Buffer.from(`\r\n--${boundary}--\r\n`);
		const line = Buffer.from('0.000,1.0\n');
		const block = Buffer.alloc(1024 * 1024);
		for (let i = 0; i < block.length; i += line.length) line.copy(block, i, 0, Math.min(line.length, block.length - i));
		let left = limit + 1;
		let sentHead = false;
		let sentTail = false;
		// generated chunk by chunk: the test never holds the 100 MB body either
		const body = new ReadableStream<Uint8Array>({
			pull(c) {
				if (!sentHead) {
					sentHead = true;
					return c.enqueue(head);
				}
				if (left > 0) {
					const n = Math.min(left, block.length);
					left -= n;
					return c.enqueue(block.subarray(0, n));
				}
				if (!sentTail) {
					sentTail = true;
					return c.enqueue(tail);
				}
				c.close();
			}
		});
		const res = await fetch(`${app.base}/api/studies/${studyA}/sessions/${legSession}/trials`, {
			method: 'POST',
			body,
			duplex: 'half',
			headers: {
				cookie: app.cookies.technicianA,
				origin: app.base,
				accept: 'application/json',
				'content-type': `multipart/form-data; boundary=${boundary}`
			}
		} as RequestInit);
		expect(res.status).toBe(413);
		const j = await res.json();
		expect(j.message).toContain('larger than the 100 MB limit');
		expect(await counts()).toEqual(before);
	}, 180_000);
});

describe('a good file', () => {
	let trialId: string;
	it('is stored as a trial (201) and its raw bytes read back byte-identical with the same SHA-256', async () => {
		const bytes = fs.readFileSync(KNEE_FILE);
		const { status, body } = await uploadJson(legSession, [{ name: 'knee.csv', bytes }]);
		expect(status, JSON.stringify(body).slice(0, 400)).toBe(201);
		trialId = body.trial.id;
		expect(body.trial).toMatchObject({ fileName: 'knee.csv', sha256: sha(bytes), channels: LEG });
		expect(body.trial.sampleHz).toBeCloseTo(200, 6);
		const row = (
			await app.sql.query(
				`SELECT t.raw_upload_id, u.sha256, u.byte_size FROM trials t JOIN raw_uploads u ON u.id = t.raw_upload_id WHERE t.id = $1`,
				[trialId]
			)
		).rows[0];
		expect(row.sha256).toBe(sha(bytes));
		expect(Number(row.byte_size)).toBe(bytes.length);
		const chunks = (
			await app.sql.query(`SELECT bytes FROM raw_upload_chunks WHERE upload_id = $1 ORDER BY seq`, [row.raw_upload_id])
		).rows.map((r) => r.bytes as Buffer);
		const back = Buffer.concat(chunks);
		expect(back.equals(bytes)).toBe(true);
		expect(sha(back)).toBe(sha(bytes));
	});

	it('a file of several MiB is kept in 1 MiB chunks, byte-identical', async () => {
		const bytes = legCsv(40_000);
		expect(bytes.length).toBeGreaterThan(2 * 1048576);
		const { status, body } = await uploadJson(legSession, [{ name: 'long.csv', bytes }]);
		expect(status, JSON.stringify(body).slice(0, 400)).toBe(201);
		const up = (await app.sql.query(`SELECT raw_upload_id FROM trials WHERE id = $1`, [body.trial.id])).rows[0].raw_upload_id;
		const rows = (
			await app.sql.query(`SELECT seq, octet_length(bytes) n, bytes FROM raw_upload_chunks WHERE upload_id = $1 ORDER BY seq`, [up])
		).rows;
		expect(rows.length).toBe(Math.ceil(bytes.length / 1048576));
		expect(rows.slice(0, -1).every((r) => Number(r.n) === 1048576)).toBe(true);
		expect(Buffer.concat(rows.map((r) => r.bytes)).equals(bytes)).toBe(true);
		expect(body.trial.frameCount).toBe(40_000);
		expect(body.trial.sampleHz).toBeCloseTo(1000, 6);
	});

	it('uploaded twice to the session is offered as a duplicate (409) and not stored again', async () => {
		const before = await counts();
		const bytes = fs.readFileSync(KNEE_FILE);
		const { status, body } = await uploadJson(legSession, [{ name: 'knee-again.csv', bytes }]);
		expect(status).toBe(409);
		expect(body.duplicateOf).toMatchObject({ trialId, fileName: 'knee.csv' });
		expect(body.message).toMatch(/already uploaded to this session as trial knee\.csv on \d{4}-\d{2}-\d{2}/);
		expect(await counts()).toEqual(before);
		// the seeded trial of the demo session is recognised too
		const seeded = await uploadJson(app.ids.sessionA, [{ name: 'shelf.csv', bytes: fs.readFileSync(SHELF_FILE) }]);
		expect(seeded.status).toBe(409);
		expect(seeded.body.duplicateOf.trialId).toBe(app.ids.trialA);
	});

	it('several files in one request get one result each', async () => {
		const { status, body } = await uploadJson(legSession, [
			{ name: 'a.csv', bytes: legCsv(200, 0.1) },
			{ name: 'b.csv', bytes: legCsv(200, 0.2) },
			{ name: 'bad.csv', bytes: Buffer.from('time (s),x\n0,1\n') }
		]);
		expect(status).toBe(207);
		expect(body.results.map((r: { fileName: string; status: number }) => [r.fileName, r.status])).toEqual([
			['a.csv', 201],
			['b.csv', 201],
			['bad.csv', 422]
		]);
	});

	it('without JavaScript: the form post comes back to the session page with the outcome', async () => {
		const res = await upload(
			legSession,
			[{ name: 'plain-form.csv', bytes: legCsv(300, 0.3) }],
			{},
			{ accept: 'text/html,application/xhtml+xml' }
		);
		expect(res.status).toBe(303);
		expect(res.headers.get('location')).toBe(`/studies/${studyA}/sessions/${legSession}`);
		const flash = res.headers
			.getSetCookie()
			.map((c) => c.split(';')[0])
			.find((c) => c.startsWith('momentry-upload='));
		expect(flash).toBeTruthy();
		const page = await (
			await fetch(`${app.base}/studies/${studyA}/sessions/${legSession}`, { headers: { cookie: `${app.cookies.technicianA}; ${flash}` } })
		).text();
		expect(page).toContain('plain-form.csv stored as a trial');
	});
});

describe('column mapping', () => {
	const foreign = () => {
		const lines = ['Zeit_ms;HipFlex;HipAdd;HipRot;KneeFlex;AnkleDF;AnkleInv'];
		for (let k = 0; k < 200; k++) {
			const a = Math.sin(k / 30);
			lines.push(
				[
					String(k * 5),
					(20 + 10 * a).toFixed(4),
					(2 * a).toFixed(4),
					a.toFixed(4),
					(-(45 + 30 * a)).toFixed(4),
					(5 * a).toFixed(4),
					a.toFixed(4)
				].join(';')
			);
		}
		return Buffer.from(lines.join('\n') + '\n');
	};
	const mapping = {
		timeColumn: 'Zeit_ms',
		timeUnit: 'ms',
		columns: {
			HipFlex: { channel: 'right.hip.flexion', unit: 'deg', flip: false },
			HipAdd: { channel: 'right.hip.adduction', unit: 'deg', flip: false },
			HipRot: { channel: 'right.hip.internalRotation', unit: 'deg', flip: false },
			// the other system counts knee flexion negative
			KneeFlex: { channel: 'right.knee.flexion', unit: 'deg', flip: true },
			AnkleDF: { channel: 'right.ankle.dorsiflexion', unit: 'deg', flip: false },
			AnkleInv: { channel: 'right.ankle.inversion', unit: 'deg', flip: false }
		}
	};

	it('a file in another layout asks for a mapping, then is stored with a preset and with the mapping table', async () => {
		const bytes = foreign();
		const first = await uploadJson(legSession, [{ name: 'other-system.csv', bytes }]);
		expect(first.status).toBe(422);
		expect(first.body.needsMapping.headers).toEqual(['Zeit_ms', 'HipFlex', 'HipAdd', 'HipRot', 'KneeFlex', 'AnkleDF', 'AnkleInv']);

		const bad = await fetch(`${app.base}/api/studies/${studyA}/mapping-presets`, {
			method: 'POST',
			headers: { cookie: app.cookies.technicianA, origin: app.base, 'content-type': 'application/json' },
			body: JSON.stringify({ name: 'Lab B export', mapping: { ...mapping, timeUnit: 'minutes' } })
		});
		expect(bad.status).toBe(400);
		expect((await bad.json()).errors.mapping).toContain('timeUnit');
		const made = await fetch(`${app.base}/api/studies/${studyA}/mapping-presets`, {
			method: 'POST',
			headers: { cookie: app.cookies.technicianA, origin: app.base, 'content-type': 'application/json' },
			body: JSON.stringify({ name: 'Lab B export', mapping })
		});
		expect(made.status).toBe(201);
		const preset = (await made.json()).preset;
		const again = await fetch(`${app.base}/api/studies/${studyA}/mapping-presets`, {
			method: 'POST',
			headers: { cookie: app.cookies.technicianA, origin: app.base, 'content-type': 'application/json' },
			body: JSON.stringify({ name: 'Lab B export', mapping })
		});
		expect(again.status).toBe(409);
		const list = await (
			await fetch(`${app.base}/api/studies/${studyA}/mapping-presets`, { headers: { cookie: app.cookies.researcherA } })
		).json();
		expect(list.presets.map((p: { name: string }) => p.name)).toContain('Lab B export');

		const withPreset = await uploadJson(legSession, [{ name: 'other-system.csv', bytes }], { presetId: preset.id });
		expect(withPreset.status, JSON.stringify(withPreset.body).slice(0, 400)).toBe(201);
		expect(withPreset.body.trial.mapped).toBe(true);
		expect(withPreset.body.trial.channels).toEqual(LEG);
		expect(withPreset.body.trial.sampleHz).toBeCloseTo(200, 6);
		const stored = (await app.sql.query(`SELECT mapping FROM trials WHERE id = $1`, [withPreset.body.trial.id])).rows[0].mapping;
		expect(stored).toEqual(mapping);

		// the no-JavaScript mapping table's own fields, saving the mapping as a second preset on the way
		const other = Buffer.concat([bytes, Buffer.from('1000;20;0;0;-45;0;0\n')]);
		const table: Record<string, string> = { timeColumn: 'Zeit_ms', timeUnit: 'ms', presetName: 'Lab B export, table' };
		Object.entries(mapping.columns).forEach(([h, c], i) => {
			table[`col.${i}.header`] = h;
			table[`col.${i}.channel`] = c.channel;
			table[`col.${i}.unit`] = c.unit;
			if (c.flip) table[`col.${i}.flip`] = 'on';
		});
		const viaTable = await uploadJson(legSession, [{ name: 'other-system-2.csv', bytes: other }], table);
		expect(viaTable.status, JSON.stringify(viaTable.body).slice(0, 400)).toBe(201);
		expect(viaTable.body.presetSaved.name).toBe('Lab B export, table');
	});

	it('a preset of another study is not found', async () => {
		const otherStudyPreset = (
			await app.sql.query(`INSERT INTO mapping_presets (study_id, name, mapping) VALUES ($1, 'theirs', $2) RETURNING id`, [
				studyB,
				JSON.stringify(mapping)
			])
		).rows[0].id;
		const r = await uploadJson(legSession, [{ name: 'x.csv', bytes: legCsv(100, 0.9) }], { presetId: otherStudyPreset });
		expect(r.status).toBe(422);
		expect(r.body.problems[0].code).toBe('preset-unknown');
	});
});

describe('consent', () => {
	/** A session written directly (as if it had been created before consent changed). */
	async function sessionFor(code: string): Promise<{ sid: string; study: string }> {
		const p = (await app.sql.query(`SELECT id, study_id FROM participants WHERE code = $1`, [code])).rows[0];
		const setup = { table: 'de-leva-1996', limbs: ['right.leg'], bases: {}, loads: [], gravity: [0, -9.81, 0] };
		const s = await app.sql.query(
			`INSERT INTO sessions (study_id, participant_id, session_on, operator, task, setup) VALUES ($1, $2, '2026-11-01', 'T. Okafor', 'test', $3) RETURNING id`,
			[p.study_id, p.id, JSON.stringify(setup)]
		);
		return { sid: s.rows[0].id, study: p.study_id };
	}

	for (const [code, reason] of [
		['ALD-005', 'ALD-005 has not given consent (state: invited); uploads are refused'],
		['KNE-003', 'KNE-003 has withdrawn consent (state: withdrawn); uploads are refused']
	] as const) {
		it(`an upload for ${code} is refused with 409 naming the reason, by the API and by the plain form`, async () => {
			const { sid, study } = await sessionFor(code);
			const before = await counts();
			const api = await uploadJson(sid, [{ name: 'k.csv', bytes: fs.readFileSync(KNEE_FILE) }], {}, { cookie: app.cookies.piA, study });
			expect(api.status).toBe(409);
			expect(api.body.message).toContain(reason);
			const form = await upload(
				sid,
				[{ name: 'k.csv', bytes: fs.readFileSync(KNEE_FILE) }],
				{},
				{ cookie: app.cookies.piA, study, accept: 'text/html' }
			);
			expect(form.status).toBe(409);
			expect((await form.text()).replace(/&#39;|&apos;/g, "'")).toContain(reason);
			expect(await counts()).toEqual(before);
		});
	}
});

describe('access', () => {
	it('a researcher may not upload (403); a session of another study is not found (404)', async () => {
		const r = await uploadJson(legSession, [{ name: 'k.csv', bytes: legCsv(100) }], {}, { cookie: app.cookies.researcherA });
		expect(r.status).toBe(403);
		const other = await uploadJson(legSession, [{ name: 'k.csv', bytes: legCsv(100) }], {}, { cookie: app.cookies.piA, study: studyB });
		expect(other.status).toBe(404);
	});
});
