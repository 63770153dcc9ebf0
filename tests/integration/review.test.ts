// The review data of a session, a run's cycle events (saved, validated, audited, refused once approved) and the
/* eslint-disable @typescript-eslint/no-explicit-any -- JSON answers are read loosely here; their shapes are what the assertions check */
// compare page (codes only; excluded runs left out).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import { startApp, type AppUnderTest, type Persona } from './app-under-test';
import { lockedMessage } from '../../src/lib/server/sessions/lock';

let app: AppUnderTest;
beforeAll(async () => {
	app = await startApp('review');
});
afterAll(async () => app?.close());

const seed = JSON.parse(fs.readFileSync('seeds/demo/participants.json', 'utf8')) as {
	studies: Record<string, { participants: { fullName: string; email: string }[] }>;
};
const secrets = Object.values(seed.studies).flatMap((s) => s.participants.flatMap((p) => [p.fullName, p.email]));

async function get(persona: Persona, path: string, accept = 'application/json') {
	const res = await fetch(app.base + path, { headers: { cookie: app.cookies[persona], accept }, redirect: 'manual' });
	const text = await res.text();
	let json: any = null;
	try {
		json = JSON.parse(text);
	} catch {
		/* html */
	}
	return { status: res.status, text, json };
}
async function postEvents(persona: Persona, body: unknown) {
	const res = await fetch(`${app.base}/api/studies/${app.ids.studyA}/runs/${app.ids.runA}/events`, {
		method: 'POST',
		headers: { cookie: app.cookies[persona], origin: app.base, accept: 'application/json', 'content-type': 'application/json' },
		body: JSON.stringify(body)
	});
	return { status: res.status, json: (await res.json().catch(() => null)) as any };
}
const reviewPath = (q = 'moment') => `/api/studies/${app.ids.studyA}/sessions/${app.ids.sessionA}/review?quantity=${q}`;

describe('session review data', () => {
	it('gives every sample (6 significant digits) and at most 2000 drawn indices per curve', async () => {
		const r = await get('researcherA', reviewPath());
		expect(r.status).toBe(200);
		const run = r.json.runs.find((x: any) => x.runId === app.ids.runA);
		expect(run).toBeTruthy();
		expect(run.latest).toBe(true);
		expect(run.t.length).toBe(run.samples);
		const full = await get('researcherA', `/api/studies/${app.ids.studyA}/runs/${app.ids.runA}/series?quantity=moment`);
		expect(full.status).toBe(200);
		expect(run.curves.map((c: any) => c.name)).toEqual(full.json.curves.map((c: any) => c.name));
		for (const c of run.curves) {
			const ref = full.json.curves.find((x: any) => x.name === c.name);
			expect(c.v.length).toBe(ref.v.length);
			// 6 significant digits: within half a unit of the 6th digit, |Δ| ≤ 5e-6·|x| (hand-computed bound)
			c.v.forEach((x: number | null, i: number) => {
				if (ref.v[i] === null) expect(x).toBeNull();
				else expect(Math.abs((x as number) - ref.v[i])).toBeLessThanOrEqual(5e-6 * Math.abs(ref.v[i]) + 1e-300);
			});
			expect(c.drawn.length).toBeLessThanOrEqual(2000);
			expect(c.drawn.every((i: number, k: number) => i >= 0 && i < run.samples && (k === 0 || i > c.drawn[k - 1]))).toBe(true);
			expect(c.positive).toBeTruthy();
		}
		expect(r.text.toLowerCase()).not.toContain(secrets[0].toLowerCase());
		// the run's stored edge zone comes with it, for the hatched bands
		const zone = (await app.sql.query(`SELECT edge_zone FROM runs WHERE id = $1`, [app.ids.runA])).rows[0].edge_zone;
		expect(zone.startSamples + zone.endSamples).toBeGreaterThan(0);
		expect(run.edgeZone).toEqual({ computed: true, ...zone });
	});

	it('gzips the large answer for a client that accepts it, and only then', async () => {
		const ask = (encoding: string) =>
			fetch(app.base + reviewPath(), {
				headers: { cookie: app.cookies.researcherA, accept: 'application/json', 'accept-encoding': encoding }
			});
		const zipped = await ask('gzip, deflate');
		expect(zipped.headers.get('content-encoding')).toBe('gzip');
		expect(zipped.headers.get('vary')).toMatch(/accept-encoding/i);
		const plain = await ask('identity');
		expect(plain.headers.get('content-encoding')).toBeNull();
		// fetch undoes the gzip: the same answer either way
		const [a, b] = [
			(await zipped.json()) as { runs: { runId: string; t: number[] }[] },
			(await plain.json()) as { runs: { runId: string; t: number[] }[] }
		];
		expect(a.runs.map((r) => [r.runId, r.t.length])).toEqual(b.runs.map((r) => [r.runId, r.t.length]));
	});

	it('reduces when asked for fewer points, keeping the extremes', async () => {
		const r = await get('researcherA', `${reviewPath()}&points=100`);
		const run = r.json.runs.find((x: any) => x.runId === app.ids.runA);
		for (const c of run.curves) {
			expect(c.drawn.length).toBeLessThanOrEqual(100);
			const finite = c.v.filter((x: number | null) => x !== null) as number[];
			const drawn = c.drawn.map((i: number) => c.v[i]).filter((x: number | null) => x !== null);
			expect(Math.max(...drawn)).toBe(Math.max(...finite));
			expect(Math.min(...drawn)).toBe(Math.min(...finite));
		}
	});

	it('refuses an unknown quantity (400) and another study (404)', async () => {
		expect((await get('researcherA', reviewPath('mass'))).status).toBe(400);
		expect((await get('piA', `/api/studies/${app.ids.studyB}/sessions/${app.ids.sessionA}/review`)).status).toBe(404);
	});
});

describe('cycle events', () => {
	let first = 0;
	let last = 0;
	beforeAll(async () => {
		const run = (await get('researcherA', reviewPath('angle'))).json.runs.find((x: any) => x.runId === app.ids.runA);
		first = run.t[0];
		last = run.t[run.t.length - 1];
	});

	it('saves, reads back, replaces and audits the events', async () => {
		const times = [first + 0.5, first + 1.0, first + 1.5];
		const r = await postEvents('researcherA', { times, source: 'manual' });
		expect(r.status, JSON.stringify(r.json)).toBe(200);
		expect(r.json.events.times).toEqual(times);
		const back = await get('researcherA', `/api/studies/${app.ids.studyA}/runs/${app.ids.runA}/events`);
		expect(back.json.events.times).toEqual(times);
		expect(back.json.events.source).toBe('manual');
		const replaced = await postEvents('technicianA', {
			times: [first + 0.25, first + 0.75],
			source: 'threshold',
			rule: { dof: 'right.elbow.flexion', threshold: 30, direction: 'rising' }
		});
		expect(replaced.status).toBe(200);
		const rows = (await app.sql.query(`SELECT times, source, rule FROM cycle_events WHERE run_id = $1`, [app.ids.runA])).rows;
		expect(rows.length).toBe(1);
		expect(rows[0].times.map(Number)).toEqual([first + 0.25, first + 0.75]);
		expect(rows[0].source).toBe('threshold');
		const audit = (
			await app.sql.query(`SELECT details FROM audit_events WHERE action = 'run.events.save' AND record_id = $1 ORDER BY occurred_at`, [
				app.ids.runA
			])
		).rows;
		expect(audit.length).toBe(2);
		expect(audit[1].details.previous).toEqual(times);
	});

	it('refuses bad event lists with a message on the field', async () => {
		const cases: [unknown, RegExp][] = [
			[{ times: [first + 1, first + 0.5] }, /strictly increasing: event 2/],
			[{ times: [first + 1, first + 1] }, /strictly increasing/],
			[{ times: [first + 0.5] }, /at least two events/],
			[{ times: [first + 0.5, last + 1] }, /Event 2 .* lies outside the recording/],
			[{ times: ['soon', 1] }, /number of seconds/],
			[{ times: 'later' }, /list of seconds/]
		];
		for (const [body, message] of cases) {
			const r = await postEvents('researcherA', body);
			expect(r.status, JSON.stringify(body)).toBe(400);
			expect(r.json.errors.times, JSON.stringify(body)).toMatch(message);
		}
		const bad = await postEvents('researcherA', { times: [first + 0.2, first + 0.4], source: 'guess' });
		expect(bad.status).toBe(400);
		expect(bad.json.errors.source).toMatch(/manual, peaks or threshold/);
		// nothing changed
		const rows = (await app.sql.query(`SELECT times FROM cycle_events WHERE run_id = $1`, [app.ids.runA])).rows;
		expect(rows[0].times.map(Number)).toEqual([first + 0.25, first + 0.75]);
	});

	it('takes a plain form post and sends the browser back to the session', async () => {
		const back = `/studies/${app.ids.studyA}/sessions/${app.ids.sessionA}`;
		const res = await fetch(`${app.base}/api/studies/${app.ids.studyA}/runs/${app.ids.runA}/events?back=${encodeURIComponent(back)}`, {
			method: 'POST',
			headers: { cookie: app.cookies.piA, origin: app.base, accept: 'text/html', 'content-type': 'application/x-www-form-urlencoded' },
			body: new URLSearchParams({ times: `${first + 0.3}, ${first + 0.6}; ${first + 0.9}` }),
			redirect: 'manual'
		});
		expect(res.status).toBe(303);
		expect(res.headers.get('location')).toBe(`${back}#review`);
		expect((await app.sql.query(`SELECT cardinality(times) AS n FROM cycle_events WHERE run_id = $1`, [app.ids.runA])).rows[0].n).toBe(3);
	});

	it('refuses with 409 on an approved session and changes nothing', async () => {
		await app.sql.query(`UPDATE sessions SET state = 'approved' WHERE id = $1`, [app.ids.sessionA]);
		try {
			const r = await postEvents('researcherA', { times: [first + 0.1, first + 0.2] });
			expect(r.status).toBe(409);
			expect(r.json.message).toBe(lockedMessage);
			expect((await app.sql.query(`SELECT cardinality(times) AS n FROM cycle_events WHERE run_id = $1`, [app.ids.runA])).rows[0].n).toBe(3);
		} finally {
			await app.sql.query(`UPDATE sessions SET state = 'draft' WHERE id = $1`, [app.ids.sessionA]);
		}
	});
});

describe('compare page', () => {
	const comparePath = (q: string) => `/studies/${app.ids.studyA}/compare?${q}`;

	it('overlays sessions of a participant by code, from the marked repetitions', async () => {
		const r = await get(
			'researcherA',
			comparePath(`mode=sessions&participant=${app.ids.participantA}&session=${app.ids.sessionA}&quantity=moment`),
			'text/html'
		);
		expect(r.status).toBe(200);
		expect(r.text).toContain('ALD-001');
		expect(r.text).toContain('time-normalised repetitions between marked events (2 repetitions from 1 run)');
		for (const s of secrets) expect(r.text.toLowerCase()).not.toContain(s.toLowerCase());
		const data = await get('researcherA', `/studies/${app.ids.studyA}/compare/__data.json?mode=group&p=${app.ids.participantA}`, '*/*');
		expect(data.status).toBe(200);
		for (const s of secrets) expect(data.text.toLowerCase()).not.toContain(s.toLowerCase());
	});

	it('leaves out a repetition that overlaps the edge zone, says so, and takes it in with the switch', async () => {
		const zone = (await app.sql.query(`SELECT edge_zone FROM runs WHERE id = $1`, [app.ids.runA])).rows[0].edge_zone;
		const run = (await get('researcherA', reviewPath('angle'))).json.runs.find((x: any) => x.runId === app.ids.runA);
		const first = run.t[0];
		// repetition 1 starts on the first sample (inside the zone); repetition 2 lies clear of it
		const times = [first, first + zone.startSeconds + 0.2, first + zone.startSeconds + 0.4];
		expect((await postEvents('researcherA', { times, source: 'manual' })).status).toBe(200);
		const q = `mode=sessions&participant=${app.ids.participantA}&session=${app.ids.sessionA}&quantity=moment`;
		const out = await get('researcherA', comparePath(q), 'text/html');
		expect(out.text).toContain('time-normalised repetitions between marked events (1 repetitions from 1 run)');
		expect(out.text).toContain('1 repetition was left out because it overlaps an edge zone, where results are not reliable');
		expect(out.text).toMatch(/name="includeEdgeZones" value="1"(?![^>]*checked)/);
		const data = await get('researcherA', `/studies/${app.ids.studyA}/compare/__data.json?${q}`, '*/*');
		expect(data.status).toBe(200);
		const incl = await get('researcherA', comparePath(`${q}&includeEdgeZones=1`), 'text/html');
		expect(incl.text).toContain('time-normalised repetitions between marked events (2 repetitions from 1 run)');
		expect(incl.text).not.toContain('left out because');
		expect(incl.text).toMatch(/name="includeEdgeZones" value="1" checked/);
		// group mode: the participant's mean is made of the kept repetition only (n counts participants)
		const group = await get('researcherA', comparePath(`mode=group&p=${app.ids.participantA}`), 'text/html');
		expect(group.text).toContain('1 repetition was left out because it overlaps an edge zone');
	});

	it('uses whole trials without events and never an excluded run', async () => {
		await app.sql.query(`DELETE FROM cycle_events WHERE run_id = $1`, [app.ids.runA]);
		const whole = await get('researcherA', comparePath(`mode=group&p=${app.ids.participantA}`), 'text/html');
		expect(whole.text).toContain('time-normalised whole trials (no events marked; 1 run)');
		expect(whole.text).toContain('1 whole trial was normalised without its edge zones');
		const incl = await get('researcherA', comparePath(`mode=group&p=${app.ids.participantA}&includeEdgeZones=1`), 'text/html');
		expect(incl.text).not.toContain('whole trial was normalised without');
		await app.sql.query(`UPDATE runs SET flag_decision = 'exclude' WHERE id = $1`, [app.ids.runA]);
		try {
			const ex = await get('researcherA', comparePath(`mode=group&p=${app.ids.participantA}`), 'text/html');
			expect(ex.text).toContain('no finished runs to use');
			const review = await get('researcherA', reviewPath());
			expect(review.json.runs.some((x: any) => x.runId === app.ids.runA)).toBe(false);
		} finally {
			await app.sql.query(`UPDATE runs SET flag_decision = NULL WHERE id = $1`, [app.ids.runA]);
		}
	});
});
