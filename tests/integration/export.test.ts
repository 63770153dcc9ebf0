// Export of an approved session over HTTP: the ZIP's entries, results.csv against the stored series, provenance
// hashes against the raw bytes and the database, no personal data, refusals by state and role; the printable report.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { startApp, type AppUnderTest, type Persona } from './app-under-test';
import { decodeFloat64 } from '../../src/lib/server/runs/results-codec';

const seed = JSON.parse(fs.readFileSync('seeds/demo/participants.json', 'utf8')) as {
	studies: Record<string, { participants: { fullName: string; email: string; phone: string | null }[] }>;
};
const secrets = [
	...new Set(
		Object.values(seed.studies)
			.flatMap((s) => s.participants.flatMap((p) => [p.fullName, p.email, ...(p.phone ? [p.phone, p.phone.replace(/\s+/g, '')] : [])]))
			.map((x) => x.toLowerCase())
	)
];

let app: AppUnderTest;
let dir: string;
const exportPath = () => `/api/studies/${app.ids.studyA}/sessions/${app.ids.sessionA}/export`;
const get = (persona: Persona, p: string) =>
	fetch(app.base + p, { headers: { cookie: app.cookies[persona], accept: 'text/html' }, redirect: 'manual' });

beforeAll(async () => {
	app = await startApp('export');
	dir = fs.mkdtempSync(path.join(os.tmpdir(), 'momentry-export-'));
}, 120_000);
afterAll(async () => {
	await app?.close();
	if (dir) fs.rmSync(dir, { recursive: true, force: true });
});

async function download(persona: Persona): Promise<{ res: Response; out: string }> {
	const res = await get(persona, exportPath());
	const out = path.join(dir, `${persona}-${Date.now()}`);
	fs.mkdirSync(out);
	if (res.status === 200) {
		fs.writeFileSync(path.join(out, 'x.zip'), Buffer.from(await res.arrayBuffer()));
		// python's zipfile checks every entry's CRC while extracting
		execFileSync('/usr/bin/python3', ['-m', 'zipfile', '-e', path.join(out, 'x.zip'), path.join(out, 'x')]);
	}
	return { res, out };
}
const entries = (out: string) =>
	execFileSync('/usr/bin/python3', [
		'-c',
		'import sys,zipfile; print("\\n".join(zipfile.ZipFile(sys.argv[1]).namelist()))',
		path.join(out, 'x.zip')
	])
		.toString()
		.trim()
		.split('\n');

describe('session export', () => {
	it('refuses a session that is not approved with 409, naming its state', async () => {
		const res = await fetch(app.base + exportPath(), { headers: { cookie: app.cookies.piA, accept: 'application/json' } });
		expect(res.status).toBe(409);
		expect(((await res.json()) as { message: string }).message).toMatch(/draft/);
	});

	it('exports the approved session', async () => {
		await app.sql.query(`UPDATE sessions SET state = 'approved' WHERE id = $1`, [app.ids.sessionA]);
		const tt = await app.sql.query(`SELECT 1 FROM information_schema.tables WHERE table_name = 'session_transitions'`);
		if (tt.rowCount) {
			await app.sql.query(
				`INSERT INTO session_transitions (id, session_id, from_state, to_state, actor_user_id, actor_label, note, signature_meaning, signature_method)
				 SELECT gen_random_uuid(), $1, 'in_review', 'approved', u.id, u.email, NULL, 'I approve these results as reviewed.', 'password' FROM users u WHERE u.email = 'pi@alder-creek.example'`,
				[app.ids.sessionA]
			);
		}

		for (const [persona, status] of [
			['technicianA', 403],
			['memberB', 404],
			['admin', 404],
			['anonymous', 401]
		] as const) {
			expect((await get(persona, exportPath())).status, persona).toBe(status);
		}

		const { res, out } = await download('researcherA');
		expect(res.status).toBe(200);
		expect(res.headers.get('content-type')).toBe('application/zip');
		expect(res.headers.get('content-disposition')).toBe('attachment; filename="SHELF-REACH-ALD-001-2026-11-18-session.zip"');

		const trial = (
			await app.sql.query(
				`SELECT t.file_name, t.sha256, t.frame_count, u.sha256 AS upload_sha FROM trials t JOIN raw_uploads u ON u.id = t.raw_upload_id WHERE t.id = $1`,
				[app.ids.trialA]
			)
		).rows[0];
		expect(entries(out).sort()).toEqual(['README.txt', 'provenance.json', `raw/${trial.file_name}`, 'results.csv'].sort());

		// the raw bytes as uploaded: hashed here, equal to the trial's and the upload's hash and to provenance.json's
		const raw = fs.readFileSync(path.join(out, 'x', 'raw', trial.file_name));
		const sha = createHash('sha256').update(raw).digest('hex');
		const prov = JSON.parse(fs.readFileSync(path.join(out, 'x', 'provenance.json'), 'utf8'));
		expect(sha).toBe(trial.sha256);
		expect(sha).toBe(trial.upload_sha);
		expect(prov.trials[0].rawSha256).toBe(sha);
		expect(prov.trials[0].byteSize).toBe(raw.length);
		expect(prov.participant).toEqual({ code: 'ALD-001' });
		expect(prov.study.code).toBe('SHELF-REACH');
		expect(prov.trials[0].run.number).toBe(1);
		expect(prov.trials[0].run.anthropometricTable.citation.length).toBeGreaterThan(20);
		expect(prov.trials[0].run.model.parameters.segments.length).toBeGreaterThan(0);
		if (tt.rowCount) expect(prov.approval).toMatchObject({ meaning: 'I approve these results as reviewed.' });

		// results.csv: header, one row per frame and series component, values equal to the stored float64 series
		const csv = fs
			.readFileSync(path.join(out, 'x', 'results.csv'), 'utf8')
			.trimEnd()
			.split('\n');
		expect(csv[0]).toBe('participant,trial,run,dof,quantity,unit,axis,repetition,x,value,in_edge_zone');
		const series = (await app.sql.query(`SELECT name, quantity, components, data FROM run_series WHERE run_id = $1`, [app.ids.runA])).rows;
		const time = decodeFloat64(series.find((r) => r.quantity === 'time')!.data);
		const comps = series.filter((r) => r.quantity !== 'time').reduce((a, r) => a + r.components, 0);
		expect(time.length).toBe(trial.frame_count);
		expect(csv.length - 1).toBe(time.length * comps);
		const moment = series.find((r) => r.quantity === 'moment')!;
		const stored = decodeFloat64(moment.data);
		const rows = csv.filter((l) => l.includes(`,${moment.name},moment,`));
		expect(rows.length).toBe(time.length);
		for (const i of [0, Math.floor(time.length / 2), time.length - 1]) {
			const f = rows[i].split(',');
			// exact: JavaScript's Number → string is the shortest text that reads back as the same double (ECMAScript spec)
			expect(Number(f[8])).toBe(time[i]);
			expect(Number(f[9])).toBe(stored[i]);
			expect(f.slice(0, 3)).toEqual(['ALD-001', trial.file_name, '1']);
		}

		// the edge zone: provenance.json gives the run's stored zone; in_edge_zone is true on exactly its samples
		const zone = (await app.sql.query(`SELECT edge_zone FROM runs WHERE id = $1`, [app.ids.runA])).rows[0].edge_zone;
		expect(zone.startSamples + zone.endSamples).toBeGreaterThan(0);
		expect(prov.trials[0].run.edgeZone).toMatchObject({
			computed: true,
			...zone,
			endTreatment: prov.trials[0].run.options.endTreatment ?? null
		});
		const flags = rows.map((l) => l.split(',')[10]);
		expect(new Set(flags)).toEqual(new Set(['true', 'false']));
		flags.forEach((f, i) => expect(f, `sample ${i}`).toBe(String(i < zone.startSamples || i >= time.length - zone.endSamples)));
		// peaks in provenance leave the zone out (as stated), the whole trial beside them: checked on the stored moment series
		const kept = Array.from(stored).slice(zone.startSamples, time.length - zone.endSamples);
		const peak = prov.trials[0].run.peaks.outsideEdgeZone.find(
			(r: { dof: string; quantity: string }) => r.dof === moment.name && r.quantity === 'moment'
		);
		expect(peak.peakPositive).toBe(Math.max(...kept));
		expect(peak.peakNegative).toBe(Math.min(...kept));
		expect(peak.samples).toBe(kept.length);
		const whole = prov.trials[0].run.peaks.wholeTrial.find(
			(r: { dof: string; quantity: string }) => r.dof === moment.name && r.quantity === 'moment'
		);
		expect(whole.peakPositive).toBe(Math.max(...stored));
		expect(prov.trials[0].run.peaks.scope).toMatch(/outside the edge zone/);
		const readme = fs.readFileSync(path.join(out, 'x', 'README.txt'), 'utf8');
		expect(readme).toMatch(/in_edge_zone true where the row lies in its run's edge zone/);
		expect(readme).toMatch(/peaks\.outsideEdgeZone, the default: over the samples outside the edge/);

		// no participant's name, e-mail or phone anywhere in the archive
		for (const name of entries(out)) {
			const text = fs.readFileSync(path.join(out, 'x', name), 'utf8').toLowerCase();
			for (const secret of secrets) expect(text.includes(secret), `${name} contains personal data`).toBe(false);
		}
		const audit = await app.sql.query(`SELECT 1 FROM audit_events WHERE action = 'session.exported' AND record_id = $1`, [
			app.ids.sessionA
		]);
		expect(audit.rowCount).toBe(1);
	}, 60_000);

	it('never exports an excluded run; a kept one is exported and noted', async () => {
		await app.sql.query(`UPDATE runs SET flag_decision = 'exclude', flagged_reason = 'consent withdrawn' WHERE id = $1`, [app.ids.runA]);
		let { out } = await download('piA');
		expect(
			fs
				.readFileSync(path.join(out, 'x', 'results.csv'), 'utf8')
				.trimEnd()
				.split('\n')
		).toHaveLength(1);
		let prov = JSON.parse(fs.readFileSync(path.join(out, 'x', 'provenance.json'), 'utf8'));
		expect(prov.trials[0].run).toBeNull();
		expect(prov.trials[0].runsNotExported[0]).toMatchObject({ number: 1, flagDecision: 'exclude', reason: 'excluded' });
		await app.sql.query(`UPDATE runs SET flag_decision = 'keep' WHERE id = $1`, [app.ids.runA]);
		({ out } = await download('piA'));
		prov = JSON.parse(fs.readFileSync(path.join(out, 'x', 'provenance.json'), 'utf8'));
		expect(prov.trials[0].run.flagDecision).toBe('keep');
	}, 60_000);

	it('adds each repetition between saved events as cycle_percent rows, 0..100 % in 1 % steps', async () => {
		const series = (await app.sql.query(`SELECT name, quantity, components, data FROM run_series WHERE run_id = $1`, [app.ids.runA])).rows;
		const time = decodeFloat64(series.find((r) => r.quantity === 'time')!.data);
		const comps = series.filter((r) => r.quantity !== 'time').reduce((a, r) => a + r.components, 0);
		// three events → two repetitions; the first event falls between samples, so its value is interpolated
		const t0 = time[0];
		const dt = time[1] - time[0];
		const events = [t0 + 10.5 * dt, t0 + 60 * dt, t0 + 110 * dt];
		await app.sql.query(`INSERT INTO cycle_events (run_id, times, source) VALUES ($1, $2, 'manual')`, [app.ids.runA, events]);
		const { out } = await download('piA');
		const csv = fs
			.readFileSync(path.join(out, 'x', 'results.csv'), 'utf8')
			.trimEnd()
			.split('\n');
		const cycleRows = csv.filter((l) => l.split(',')[6] === 'cycle_percent');
		expect(cycleRows.length).toBe(2 * 101 * comps);
		expect(csv.length - 1 - cycleRows.length).toBe(time.length * comps);
		const moment = series.find((r) => r.quantity === 'moment')!;
		const v = decodeFloat64(moment.data);
		const mine = cycleRows.filter((l) => l.includes(`,${moment.name},moment,`)).map((l) => l.split(','));
		expect(mine.length).toBe(202);
		// by hand: 0 % of repetition 1 is halfway between samples 10 and 11 (linear interpolation);
		// 100 % of repetition 1 and 0 % of repetition 2 are sample 60; 50 % of repetition 2 is sample 85
		expect(mine[0].slice(7, 9)).toEqual(['1', '0']);
		// in_edge_zone of a % point: its time (sample 10.5 here) lies before the first sample outside the zone, or not
		const zone = (await app.sql.query(`SELECT edge_zone FROM runs WHERE id = $1`, [app.ids.runA])).rows[0].edge_zone;
		expect(mine[0][10]).toBe(String(10.5 < zone.startSamples));
		expect(mine[151][10]).toBe(String(85 < zone.startSamples));
		expect(Number(mine[0][9])).toBeCloseTo((v[10] + v[11]) / 2, 9);
		expect(mine[100].slice(7, 9)).toEqual(['1', '100']);
		expect(Number(mine[100][9])).toBeCloseTo(v[60], 9);
		expect(Number(mine[101][9])).toBeCloseTo(v[60], 9);
		expect(mine[151].slice(7, 9)).toEqual(['2', '50']);
		expect(Number(mine[151][9])).toBeCloseTo(v[85], 9);
		await app.sql.query(`DELETE FROM cycle_events WHERE run_id = $1`, [app.ids.runA]);
	}, 60_000);

	it('a run made before edge zones: provenance says "not computed", every row is outside a zone', async () => {
		const saved = (await app.sql.query(`SELECT edge_zone FROM runs WHERE id = $1`, [app.ids.runA])).rows[0].edge_zone;
		await app.sql.query(`UPDATE runs SET edge_zone = NULL WHERE id = $1`, [app.ids.runA]);
		try {
			const { out } = await download('piA');
			const prov = JSON.parse(fs.readFileSync(path.join(out, 'x', 'provenance.json'), 'utf8'));
			expect(prov.trials[0].run.edgeZone).toMatchObject({
				computed: false,
				startSamples: 0,
				endSamples: 0,
				startSeconds: 0,
				endSeconds: 0,
				note: 'not computed (run before edge zones were introduced)'
			});
			const flags = new Set(
				fs
					.readFileSync(path.join(out, 'x', 'results.csv'), 'utf8')
					.trimEnd()
					.split('\n')
					.slice(1)
					.map((l) => l.split(',')[10])
			);
			expect(flags).toEqual(new Set(['false']));
		} finally {
			await app.sql.query(`UPDATE runs SET edge_zone = $2 WHERE id = $1`, [app.ids.runA, JSON.stringify(saved)]);
		}
	}, 60_000);

	it('refuses (409, naming run, trial and series) a run holding a non-finite value, rather than exporting an empty cell', async () => {
		// such a run can only come from before the storage check (writeResults refuses it now): made here by hand
		const row = (
			await app.sql.query(`SELECT name, data FROM run_series WHERE run_id = $1 AND quantity = 'moment' ORDER BY name LIMIT 1`, [
				app.ids.runA
			])
		).rows[0];
		// NaN as IEEE 754 float64, little-endian: 0x7FF8000000000000
		await app.sql.query(
			`UPDATE run_series SET data = overlay(data placing '\\x000000000000f87f'::bytea from 17 for 8) WHERE run_id = $1 AND quantity = 'moment' AND name = $2`,
			[app.ids.runA, row.name]
		);
		try {
			const before = (await app.sql.query(`SELECT count(*) n FROM audit_events WHERE action = 'session.exported'`)).rows[0].n;
			const res = await fetch(app.base + exportPath(), { headers: { cookie: app.cookies.piA, accept: 'application/json' } });
			expect(res.status).toBe(409);
			const message = ((await res.json()) as { message: string }).message;
			expect(message).toContain(`moment of ${row.name}, value 3`);
			expect(message).toMatch(/Run 1 of trial “[^”]+” holds a value that is not a finite number/);
			expect((await app.sql.query(`SELECT count(*) n FROM audit_events WHERE action = 'session.exported'`)).rows[0].n).toBe(before);
		} finally {
			await app.sql.query(`UPDATE run_series SET data = $3 WHERE run_id = $1 AND quantity = 'moment' AND name = $2`, [
				app.ids.runA,
				row.name,
				row.data
			]);
		}
		expect((await get('piA', exportPath())).status).toBe(200);
	}, 60_000);

	it('renders the printable report with its print stylesheet, signature block and caution', async () => {
		const reportPath = `/studies/${app.ids.studyA}/sessions/${app.ids.sessionA}/report`;
		let res = await get('technicianA', reportPath);
		expect(res.status).toBe(200);
		let html = await res.text();
		expect(html).toContain('data-testid="signature"');
		expect(html).toContain('>Print</button>');
		expect(html).toContain('not a clinical diagnosis');
		expect(html).toContain('data-testid="moment-plot"');
		expect(html).not.toContain('DRAFT — not approved');
		if ((await app.sql.query(`SELECT to_regclass('session_transitions')::text AS t`)).rows[0].t)
			expect(html).toContain('I approve these results as reviewed.');
		const css = await Promise.all(
			[...html.matchAll(/<link[^>]+href="([^"]+\.css)"/g)].map(async (m) => (await fetch(new URL(m[1], app.base + reportPath))).text())
		);
		const styles = css.join('\n') + [...html.matchAll(/<style[^>]*>([\s\S]*?)<\/style>/g)].map((m) => m[1]).join('\n');
		expect(styles).toMatch(/@media print/);
		expect(styles).toMatch(/size:\s*A4/);
		await app.sql.query(`UPDATE sessions SET state = 'draft' WHERE id = $1`, [app.ids.sessionA]);
		res = await get('researcherA', reportPath);
		html = await res.text();
		expect(html).toContain('DRAFT — not approved');
	}, 60_000);
});
