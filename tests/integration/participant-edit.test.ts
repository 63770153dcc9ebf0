// Correcting a participant's research fields on the participant page: field messages that survive a no-JS post,
// an audit row with before and after (notes only as "changed"), and the role rules.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import pg from 'pg';
import { startApp, type AppUnderTest } from './app-under-test';

const seed = JSON.parse(fs.readFileSync('seeds/demo/participants.json', 'utf8')) as {
	studies: Record<string, { participants: { fullName: string; email: string; phone: string | null }[] }>;
};
const personalStrings = Object.values(seed.studies).flatMap((s) =>
	s.participants.flatMap((p) => [p.fullName, p.email, ...(p.phone ? [p.phone] : [])])
);

let app: AppUnderTest;
let dbc: pg.Client;
let path: string;

beforeAll(async () => {
	app = await startApp('participant_edit');
	dbc = app.sql;
	path = `/studies/${app.ids.studyA}/participants/${app.ids.participantA}`;
});
afterAll(async () => {
	await app?.close();
});

const post = (cookie: string, form: Record<string, string>) =>
	fetch(`${app.base}${path}?/research`, {
		method: 'POST',
		body: new URLSearchParams(form),
		redirect: 'manual',
		headers: { cookie, origin: app.base, accept: 'text/html', 'content-type': 'application/x-www-form-urlencoded' }
	});
const row = async () =>
	(
		await dbc.query(`SELECT sex, birth_year, body_mass_kg, stature_m, dominant_side, notes FROM participants WHERE id = $1`, [
			app.ids.participantA
		])
	).rows[0];
const audits = async () =>
	(
		await dbc.query(
			`SELECT actor_label, details FROM audit_events WHERE action = 'participant.research.changed' AND record_id = $1 ORDER BY id`,
			[app.ids.participantA]
		)
	).rows;
// ALD-001 as seeded: female, 1988, 64.2 kg, 1.68 m, right
const seeded = { sex: 'female', birthYear: '1988', bodyMassKg: '64.2', statureM: '1.68', dominantSide: 'right', notes: '' };

describe('correcting research data', () => {
	it('the participant page offers the form to PI and technicians only, filled with the current values', async () => {
		for (const [persona, shown] of [
			['technicianA', true],
			['piA', true],
			['researcherA', false]
		] as const) {
			const html = await (await fetch(app.base + path, { headers: { cookie: app.cookies[persona] } })).text();
			expect(html.includes('action="?/research"'), persona).toBe(shown);
			if (shown) expect(html).toMatch(/id="research-bodyMassKg" name="bodyMassKg"[^>]*value="64.2"/);
		}
	});

	it('answers bad values with a message at each field, keeps what was typed, and changes nothing', async () => {
		const before = await row();
		const res = await post(app.cookies.technicianA, {
			sex: 'unknown',
			birthYear: '88',
			bodyMassKg: '642',
			statureM: '168',
			dominantSide: 'both',
			notes: 'x'.repeat(2001)
		});
		expect(res.status).toBe(400);
		const html = await res.text();
		expect(html).toContain('Nothing was saved. Correct the fields marked below and save again.');
		expect(html).toMatch(/id="research-sex-error"[^>]*>sex must be "female", "male" or "not reported"/);
		expect(html).toMatch(/id="research-bodyMassKg-error"[^>]*>body mass must be between 20 and 300 kg \(got 642 kg\)/);
		expect(html).toMatch(/id="research-statureM-error"[^>]*>stature must be between 0.8 and 2.5 m \(got 168 m\)/);
		expect(html).toMatch(/id="research-birthYear-error"[^>]*>Enter a year between 1900 and \d{4}, or leave it empty./);
		expect(html).toMatch(/id="research-dominantSide-error"[^>]*>Choose left, right or not recorded./);
		expect(html).toMatch(/id="research-notes-error"[^>]*>Keep the notes under 2000 characters./);
		// what was typed comes back in the fields (a no-JS post renders the page with them)
		expect(html).toMatch(/name="bodyMassKg"[^>]*value="642"/);
		expect(html).toMatch(/<details[^>]*open/);
		expect(await row()).toEqual(before);
		expect(await audits()).toEqual([]);
	});

	it('saves the changed fields and audits before and after, the notes only as changed', async () => {
		const res = await post(app.cookies.technicianA, {
			...seeded,
			bodyMassKg: ' 65.0 ',
			dominantSide: 'left',
			birthYear: '',
			notes: 'prefers the left hand for the box'
		});
		expect(res.status).toBe(303);
		expect(res.headers.get('location')).toBe(`${path}?saved=research`);
		expect(await row()).toEqual({
			sex: 'female',
			birth_year: null,
			body_mass_kg: 65,
			stature_m: 1.68,
			dominant_side: 'left',
			notes: 'prefers the left hand for the box'
		});
		const a = await audits();
		expect(a).toEqual([
			{
				actor_label: 'technician@alder-creek.example',
				details: {
					code: 'ALD-001',
					changed: ['birthYear', 'bodyMassKg', 'dominantSide', 'notes'],
					before: { birthYear: 1988, bodyMassKg: 64.2, dominantSide: 'right' },
					after: { birthYear: null, bodyMassKg: 65, dominantSide: 'left' }
				}
			}
		]);
		expect(JSON.stringify(a)).not.toContain('left hand');
		for (const s of personalStrings) expect(JSON.stringify(a)).not.toContain(s);
		const html = await (await fetch(`${app.base}${path}?saved=research`, { headers: { cookie: app.cookies.researcherA } })).text();
		expect(html).toContain('65.0 kg');
		expect(html).toContain('✓ Research data saved.');
	});

	it('writes no audit row when nothing changed', async () => {
		const n = (await audits()).length;
		const res = await post(app.cookies.piA, {
			sex: 'female',
			birthYear: '',
			bodyMassKg: '65',
			statureM: '1.68',
			dominantSide: 'left',
			notes: 'prefers the left hand for the box'
		});
		expect(res.status).toBe(303);
		expect((await audits()).length).toBe(n);
	});

	it('refuses researchers (403) and other studies (404), and changes nothing', async () => {
		const before = await row();
		expect((await post(app.cookies.researcherA, { ...seeded, bodyMassKg: '99' })).status).toBe(403);
		expect((await post(app.cookies.memberB, { ...seeded, bodyMassKg: '99' })).status).toBe(404);
		expect(await row()).toEqual(before);
		const denied = (
			await dbc.query(
				`SELECT count(*)::int AS n FROM audit_events WHERE action = 'access.denied' AND details->>'attempted' = 'participant.edit'`
			)
		).rows[0].n;
		expect(denied).toBeGreaterThanOrEqual(2);
	});
});
