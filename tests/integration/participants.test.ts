// Participants, consent forms and study settings against the built app on a fresh seeded database: personal data
// by role (pages and JSON), study boundaries, sequential codes with field messages, immutable consent versions.
import { describe, expect, it } from 'vitest';
import fs from 'node:fs';
import { browserRequests, useApp } from './app-under-test';

const seed = JSON.parse(fs.readFileSync('seeds/demo/participants.json', 'utf8')) as {
	studies: Record<string, { participants: { fullName: string; email: string; phone: string | null }[] }>;
};
const shelfPeople = seed.studies['SHELF-REACH'].participants;
const personalStrings = Object.values(seed.studies).flatMap((s) =>
	s.participants.flatMap((p) => [p.fullName, p.email, ...(p.phone ? [p.phone] : [])])
);

const app = useApp('participants');
const { get, post } = browserRequests(app);
/** The page's data as SvelteKit serves it to client-side navigation. */
const dataJson = (path: string, cookie: string) => get(`${path.replace(/\/$/, '')}/__data.json`, cookie, '*/*');

describe('personal data by role', () => {
	const pages = () => [`/studies/${app.ids.studyA}/participants`, `/studies/${app.ids.studyA}/participants/${app.ids.participantA}`];

	it('researchers see codes but no names, e-mail addresses or phone numbers, in pages and in JSON', async () => {
		for (const path of pages()) {
			for (const res of [await get(path, app.cookies.researcherA), await dataJson(path, app.cookies.researcherA)]) {
				expect(res.status, path).toBe(200);
				const text = await res.text();
				expect(text).toContain('ALD-001');
				for (const s of personalStrings) expect(text, `${path} leaks ${s}`).not.toContain(s);
				expect(text).not.toMatch(/@example\.org/);
			}
		}
	});

	it('technicians and the PI see them', async () => {
		for (const persona of ['technicianA', 'piA'] as const) {
			const list = await (await get(`/studies/${app.ids.studyA}/participants`, app.cookies[persona])).text();
			for (const p of shelfPeople) {
				expect(list).toContain(p.fullName);
				expect(list).toContain(p.email);
			}
			const one = await (await get(`/studies/${app.ids.studyA}/participants/${app.ids.participantA}`, app.cookies[persona])).text();
			expect(one).toContain(shelfPeople[0].fullName);
			expect(one).toContain(shelfPeople[0].phone!);
		}
	});

	it('members of another study get 404 for the list and for a participant', async () => {
		expect((await get(`/studies/${app.ids.studyA}/participants`, app.cookies.memberB)).status).toBe(404);
		expect((await get(`/studies/${app.ids.studyA}/participants/${app.ids.participantA}`, app.cookies.memberB)).status).toBe(404);
		expect(
			await (await dataJson(`/studies/${app.ids.studyA}/participants/${app.ids.participantA}`, app.cookies.memberB)).text()
		).not.toContain(shelfPeople[0].fullName);
		// a participant of study A under study B's URL does not exist there, even for the PI of both
		expect((await get(`/studies/${app.ids.studyB}/participants/${app.ids.participantA}`, app.cookies.piA)).status).toBe(404);
	});
});

describe('the participant list', () => {
	it('searches by code on the server', async () => {
		const html = await (await get(`/studies/${app.ids.studyA}/participants?q=003`, app.cookies.researcherA)).text();
		expect(html).toContain('ALD-003');
		expect(html).not.toContain('ALD-001');
		// LIKE wildcards are taken literally
		expect(await (await get(`/studies/${app.ids.studyA}/participants?q=%25`, app.cookies.researcherA)).text()).not.toContain('ALD-001');
	});
	it('sorts by body mass', async () => {
		const html = await (await get(`/studies/${app.ids.studyA}/participants?sort=mass&dir=desc`, app.cookies.researcherA)).text();
		const codes = [...html.matchAll(/>(ALD-\d{3})</g)].map((m) => m[1]);
		// seeded masses: 002 82.5, 001 64.2, 003 58.9, 004 91.0, 005 70.4
		expect(codes).toEqual(['ALD-004', 'ALD-002', 'ALD-005', 'ALD-001', 'ALD-003']);
	});
});

describe('adding participants', () => {
	const valid = {
		sex: 'female',
		bodyMassKg: '61.5',
		statureM: '1.66',
		birthYear: '1992',
		dominantSide: 'right',
		notes: '',
		fullName: 'Ysolde Brackenridge',
		email: 'ysolde.brackenridge@example.org',
		phone: ''
	};

	it('issues sequential codes from the study prefix, and keeps personal data apart', async () => {
		const made: string[] = [];
		for (const persona of ['technicianA', 'piA'] as const) {
			const res = await post(`/studies/${app.ids.studyA}/participants/new`, app.cookies[persona], valid);
			expect(res.status).toBe(303);
			made.push(decodeURIComponent(res.headers.get('location')!.split('added=')[1]));
		}
		expect(made).toEqual(['ALD-006', 'ALD-007']);
		const { rows } = await app.sql.query(
			`SELECT p.code, p.body_mass_kg, pp.full_name, pp.email FROM participants p JOIN participant_personal pp ON pp.participant_id = p.id WHERE p.code = 'ALD-006'`
		);
		expect(rows[0]).toMatchObject({
			code: 'ALD-006',
			body_mass_kg: 61.5,
			full_name: 'Ysolde Brackenridge',
			email: 'ysolde.brackenridge@example.org'
		});
		const audit = await app.sql.query(`SELECT details FROM audit_events WHERE action = 'participant.created' ORDER BY id`);
		expect(audit.rows.map((r) => r.details.code)).toEqual(['ALD-006', 'ALD-007']);
		// the audit row names the personal fields entered, never their values
		expect(JSON.stringify(audit.rows)).not.toContain('Ysolde');
	});

	it('answers an invalid form with a message at each field and saves nothing', async () => {
		const before = (await app.sql.query(`SELECT count(*)::int AS n FROM participants`)).rows[0].n;
		const res = await post(`/studies/${app.ids.studyA}/participants/new`, app.cookies.technicianA, {
			...valid,
			sex: 'unknown',
			bodyMassKg: '12',
			statureM: 'tall',
			email: 'not-an-address'
		});
		expect(res.status).toBe(400);
		const html = await res.text();
		expect(html).toMatch(/data-testid="error-sex"[^>]*>sex must be/);
		expect(html).toMatch(/data-testid="error-bodyMassKg"[^>]*>body mass must be between 20 and 300 kg \(got 12 kg\)/);
		expect(html).toMatch(/data-testid="error-statureM"[^>]*>stature must be/);
		expect(html).toMatch(/data-testid="error-email"[^>]*>Enter an e-mail address/);
		expect((await app.sql.query(`SELECT count(*)::int AS n FROM participants`)).rows[0].n).toBe(before);
	});

	it('refuses researchers', async () => {
		expect((await post(`/studies/${app.ids.studyA}/participants/new`, app.cookies.researcherA, valid)).status).toBe(403);
	});

	it('keeps the history of segment lengths; the latest is used', async () => {
		const path = `/studies/${app.ids.studyA}/participants/${app.ids.participantA}?/length`;
		expect(
			(await post(path, app.cookies.technicianA, { segment: 'right.forearm', lengthM: '0.262', measuredOn: '2026-10-01' })).status
		).toBe(303);
		expect(
			(await post(path, app.cookies.technicianA, { segment: 'right.forearm', lengthM: '0.265', measuredOn: '2026-11-01' })).status
		).toBe(303);
		const bad = await post(path, app.cookies.technicianA, { segment: 'right.forearm', lengthM: '26.5', measuredOn: '2026-11-01' });
		expect(bad.status).toBe(400);
		expect(await bad.text()).toContain('between 0.02 and 1.2 m');
		const html = await (await get(`/studies/${app.ids.studyA}/participants/${app.ids.participantA}`, app.cookies.researcherA)).text();
		expect(html).toMatch(/0\.265<\/td>\s*<td[^>]*>2026-11-01<\/td>\s*<td[^>]*>✓ latest/);
		expect(html).toMatch(/0\.262<\/td>\s*<td[^>]*>2026-10-01<\/td>\s*<td[^>]*>earlier/);
	});
});

describe('correcting personal data', () => {
	it('technicians correct it; the audit names the fields, not the values; researchers are refused', async () => {
		const path = `/studies/${app.ids.studyA}/participants/${app.ids.participantA}?/personal`;
		const res = await post(path, app.cookies.technicianA, { fullName: shelfPeople[0].fullName, email: 'lena.v@example.org', phone: '' });
		expect(res.status).toBe(303);
		const row = (
			await app.sql.query(`SELECT full_name, email, phone FROM participant_personal WHERE participant_id = $1`, [app.ids.participantA])
		).rows[0];
		expect(row).toEqual({ full_name: shelfPeople[0].fullName, email: 'lena.v@example.org', phone: null });
		const audit = (
			await app.sql.query(`SELECT details FROM audit_events WHERE action = 'participant.personal.changed' AND record_id = $1`, [
				app.ids.participantA
			])
		).rows;
		expect(audit.map((a) => a.details.changed)).toEqual([['email', 'phone']]);
		expect(JSON.stringify(audit)).not.toContain('lena.v@');
		const bad = await post(path, app.cookies.piA, { fullName: '', email: 'nope', phone: '' });
		expect(bad.status).toBe(400);
		expect(await bad.text()).toContain('Enter an e-mail address such as name@example.org');
		expect((await post(path, app.cookies.researcherA, { fullName: 'x', email: '', phone: '' })).status).toBe(403);
	});
});

describe('consent form versions', () => {
	const path = () => `/studies/${app.ids.studyA}/consent-forms?/publish`;

	it('publishes a new version without changing the earlier one, and shows HTML in the source as text', async () => {
		const v1 = (await app.sql.query(`SELECT * FROM consent_form_versions WHERE study_id = $1 AND version = 1`, [app.ids.studyA])).rows[0];
		const res = await post(path(), app.cookies.piA, {
			bodyMarkdown: '# Version two\n\nNew wording. <script>alert("consent")</script>',
			confirmations: 'I have read it.\n\n  I agree.  \n'
		});
		expect(res.status).toBe(303);
		expect(res.headers.get('location')).toContain('published=2');
		const rows = (await app.sql.query(`SELECT * FROM consent_form_versions WHERE study_id = $1 ORDER BY version`, [app.ids.studyA])).rows;
		expect(rows.map((r) => r.version)).toEqual([1, 2]);
		expect(rows[0]).toEqual(v1);
		expect(rows[1].confirmations).toEqual(['I have read it.', 'I agree.']);

		const html = await (await get(`/studies/${app.ids.studyA}/consent-forms`, app.cookies.researcherA)).text();
		expect(html).toContain('<h1>Version two</h1>');
		expect(html).toContain('&lt;script&gt;alert(');
		expect(html).not.toContain('<script>alert("consent")');
		expect(html).toContain(v1.body_markdown.split('\n')[0].replace(/^# /, ''));
	});

	it('refuses an empty form with field messages, and anyone but the PI', async () => {
		const res = await post(path(), app.cookies.piA, { bodyMarkdown: '', confirmations: '' });
		expect(res.status).toBe(400);
		const html = await res.text();
		expect(html).toContain('Write the text of the consent form.');
		expect(html).toContain('Give at least one confirmation statement');
		expect((await post(path(), app.cookies.technicianA, { bodyMarkdown: 'x', confirmations: 'y' })).status).toBe(403);
	});
});

describe('study settings', () => {
	it('the PI changes ethics reference, expiry and default table; the change is audited and the banner follows', async () => {
		const soon = new Date(Date.now() + 10 * 86_400_000).toISOString().slice(0, 10);
		const res = await post(`/studies/${app.ids.studyA}/settings`, app.cookies.piA, {
			ethicsReference: 'ACU-HREC-2026-041a',
			ethicsExpiresOn: soon,
			defaultTable: 'zatsiorsky-regression-2002'
		});
		expect(res.status).toBe(303);
		const html = await (await get(`/studies/${app.ids.studyA}`, app.cookies.researcherA)).text();
		expect(html).toContain('ACU-HREC-2026-041a');
		expect(html).toContain('data-state="expiring"');
		expect(html).toContain('zatsiorsky-regression-2002');
		const audit = await app.sql.query(`SELECT details FROM audit_events WHERE action = 'study.settings.changed' AND study_id = $1`, [
			app.ids.studyA
		]);
		expect(audit.rows[0].details.before.ethicsReference).toBe('ACU-HREC-2026-041');

		const past = new Date(Date.now() - 2 * 86_400_000).toISOString().slice(0, 10);
		await post(`/studies/${app.ids.studyA}/settings`, app.cookies.piA, {
			ethicsReference: 'ACU-HREC-2026-041a',
			ethicsExpiresOn: past,
			defaultTable: 'de-leva-1996'
		});
		expect(await (await get(`/studies/${app.ids.studyA}`, app.cookies.piA)).text()).toContain('Ethics approval expired');
	});

	it('answers invalid values with field messages', async () => {
		const res = await post(`/studies/${app.ids.studyA}/settings`, app.cookies.piA, {
			ethicsReference: 'x',
			ethicsExpiresOn: '31.12.2027',
			defaultTable: 'my-table'
		});
		expect(res.status).toBe(400);
		const html = await res.text();
		expect(html).toContain('Enter the expiry as a date (YYYY-MM-DD)');
		expect(html).toContain('Choose one of the listed segment tables.');
	});
});

describe('segment model page', () => {
	it('scales the participant with the chosen table, uses measured lengths, and shows no personal data', async () => {
		const res = await fetch(
			`${app.base}/studies/${app.ids.studyA}/participants/${app.ids.participantA}/model?table=dempster-winter-2009&limb=right.leg`,
			{
				headers: { cookie: app.cookies.researcherA }
			}
		);
		expect(res.status).toBe(200);
		const html = await res.text();
		expect(html).toContain('Dempster (1955), as tabulated by Winter (2009)');
		expect(html).toContain('role="img"');
		expect(html).toContain('Right thigh');
		for (const secret of personalStrings) expect(html).not.toContain(secret);
	});
});
