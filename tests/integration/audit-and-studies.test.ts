// Studies by id across study boundaries, the audit log's filters, paging and CSV export, password change and
// "sign out everywhere", against the built app on a fresh seeded database.
import { describe, expect, it } from 'vitest';
import { randomUUID } from 'node:crypto';
import { browserRequests, DEMO_PASSWORD, PERSONAS, signInAs, useApp } from './app-under-test';
import { CSV_COLUMNS, csvField, parseAuditQuery } from '../../src/lib/server/audit/log';

const app = useApp('audit_studies');
const { get, post } = browserRequests(app);

/** access.denied rows a person caused on one path. */
async function denials(email: string, path: string) {
	const { rows } = await app.sql.query<{ study_id: string | null; details: Record<string, unknown> }>(
		`SELECT study_id, details FROM audit_events WHERE action = 'access.denied' AND actor_label = $1 AND details->>'path' = $2`,
		[email, path]
	);
	return rows;
}

/** The audit rows on a page, read from the data attributes of the table rows. */
function auditRows(html: string) {
	return [
		...html.matchAll(/<tr[^>]*data-outcome="(\w+)" data-action="([^"]*)" data-actor="([^"]*)" data-study="([^"]*)" data-at="([^"]*)"/g)
	].map((m) => ({
		outcome: m[1],
		action: m[2],
		actor: m[3],
		study: m[4],
		at: m[5]
	}));
}

/** RFC 4180 reader, enough for our export (quoted fields with commas, quotes and line breaks). */
function parseCsv(text: string): string[][] {
	const out: string[][] = [];
	let row: string[] = [];
	let field = '';
	let quoted = false;
	for (let i = 0; i < text.length; i++) {
		const c = text[i];
		if (quoted) {
			if (c === '"' && text[i + 1] === '"') {
				field += '"';
				i++;
			} else if (c === '"') quoted = false;
			else field += c;
		} else if (c === '"') quoted = true;
		else if (c === ',') {
			row.push(field);
			field = '';
		} else if (c === '\r' && text[i + 1] === '\n') {
			row.push(field);
			out.push(row);
			row = [];
			field = '';
			i++;
		} else field += c;
	}
	if (field || row.length) {
		row.push(field);
		out.push(row);
	}
	return out;
}

describe('studies by id, across study boundaries', () => {
	it('a member of another study, an unknown id and a malformed id all get 404, each audited; a member gets the study', async () => {
		const pathA = `/studies/${app.ids.studyA}`;
		const asB = await get(pathA, app.cookies.memberB);
		expect(asB.status).toBe(404);
		const bodyB = await asB.text();
		// nothing of the study leaks into the refusal
		expect(bodyB).not.toContain('SHELF-REACH');
		expect(bodyB).not.toContain('Overhead shelving');
		const deniedB = await denials(PERSONAS.memberB, pathA);
		expect(deniedB).toHaveLength(1);
		expect(deniedB[0].study_id).toBe(app.ids.studyA);
		expect(deniedB[0].details).toMatchObject({ attempted: 'study.read', answered: 404, method: 'GET' });

		const asResearcher = await get(pathA, app.cookies.researcherA);
		expect(asResearcher.status).toBe(200);
		const page = await asResearcher.text();
		expect(page).toContain('SHELF-REACH');
		expect(page).toContain('Overhead shelving reach in warehouse workers');
		for (const name of ['Tomasz Okafor', 'Mei Haraldsen', 'Jonah Abernethy']) expect(page).toContain(name);
		expect(page).toContain('Principal investigator');
		expect(page).not.toContain('Priya Castellano'); // KNEE-60 only
		expect(await denials(PERSONAS.researcherA, pathA)).toHaveLength(0);

		const unknown = `/studies/${randomUUID()}`;
		expect((await get(unknown, app.cookies.researcherA)).status).toBe(404);
		expect(await denials(PERSONAS.researcherA, unknown)).toHaveLength(1);

		// malformed: checked before any query; the row keeps the path but no study id
		const malformed = `/studies/${app.ids.studyA.slice(0, 30)}-or-1=1`;
		expect((await get(malformed, app.cookies.researcherA)).status).toBe(404);
		const rows = await denials(PERSONAS.researcherA, malformed);
		expect(rows).toHaveLength(1);
		expect(rows[0].study_id).toBeNull();

		// the administrator holds no role in SHELF-REACH: 404 as well (see readStudy)
		expect((await get(pathA, app.cookies.admin)).status).toBe(404);
		expect(await denials(PERSONAS.admin, pathA)).toHaveLength(1);
		expect((await get(pathA, '')).status).toBe(303);
	});

	it('the list shows only the studies one holds a role in; administrators see all', async () => {
		const b = await (await get('/studies', app.cookies.memberB)).text();
		expect(b).toContain('KNEE-60');
		expect(b).not.toContain('SHELF-REACH');
		expect(b).toContain(`/studies/${app.ids.studyB}`);
		const pi = await (await get('/studies', app.cookies.piA)).text();
		expect(pi).toContain('SHELF-REACH');
		expect(pi).toContain('KNEE-60');
		const admin = await (await get('/studies', app.cookies.admin)).text();
		expect(admin).toContain('SHELF-REACH');
		expect(admin).toContain('KNEE-60');
		// no link to a study page the administrator could not open
		expect(admin).not.toContain(`/studies/${app.ids.studyA}`);
	});
});

describe('the audit log', () => {
	it('is for administrators only', async () => {
		expect((await get('/audit', app.cookies.piA)).status).toBe(403);
		expect((await get('/audit/export.csv', app.cookies.piA)).status).toBe(403);
		const anon = await get('/audit', '');
		expect(anon.status).toBe(303);
		expect(anon.headers.get('location')).toMatch(/^\/signin\?next=/);
	});

	it('filters by outcome, action prefix, actor and study on the server', async () => {
		await get('/audit', app.cookies.technicianA); // one more denied row, whatever ran before
		const all = auditRows(await (await get('/audit', app.cookies.admin)).text());
		expect(new Set(all.map((r) => r.outcome))).toContain('ok');

		const deniedRes = await get('/audit?outcome=denied', app.cookies.admin);
		expect(deniedRes.status).toBe(200);
		const denied = auditRows(await deniedRes.text());
		const { rows } = await app.sql.query<{ n: string }>(`SELECT count(*) AS n FROM audit_events WHERE outcome = 'denied'`);
		expect(denied.length).toBe(Math.min(50, Number(rows[0].n)));
		expect(denied.length).toBeGreaterThan(0);
		expect(denied.every((r) => r.outcome === 'denied')).toBe(true);

		const signIns = auditRows(await (await get('/audit?action=auth.sign-in', app.cookies.admin)).text());
		expect(signIns.length).toBeGreaterThan(0);
		expect(signIns.every((r) => r.action.startsWith('auth.sign-in'))).toBe(true);

		const knee = auditRows(await (await get('/audit?actor=KNEE.res', app.cookies.admin)).text());
		expect(knee.length).toBeGreaterThan(0);
		expect(knee.every((r) => r.actor === PERSONAS.memberB)).toBe(true);

		// "_" and "%" are taken literally, not as wildcards
		const wildcard = await (await get('/audit?actor=%25', app.cookies.admin)).text();
		expect(auditRows(wildcard)).toHaveLength(0);
		expect(wildcard).toContain('No events match these filters');

		const shelf = auditRows(await (await get('/audit?study=SHELF-REACH&outcome=denied', app.cookies.admin)).text());
		expect(shelf.length).toBeGreaterThan(0);
		expect(shelf.every((r) => r.study === 'SHELF-REACH' && r.outcome === 'denied')).toBe(true);

		const today = new Date().toISOString().slice(0, 10);
		expect(auditRows(await (await get(`/audit?to=2000-01-01`, app.cookies.admin)).text())).toHaveLength(0);
		expect(auditRows(await (await get(`/audit?from=${today}&to=${today}`, app.cookies.admin)).text()).length).toBeGreaterThan(0);

		const bad = await get('/audit?from=yesterday&outcome=maybe', app.cookies.admin);
		expect(bad.status).toBe(200);
		const badHtml = await bad.text();
		expect(badHtml).toContain('is not a date');
		expect(badHtml).toContain('is not an outcome');
	});

	it('pages 50 events at a time, newest first, without overlap', async () => {
		for (let i = 0; i < 55; i++) await get('/audit', app.cookies.researcherA);
		const q = `/audit?actor=${encodeURIComponent(PERSONAS.researcherA)}&action=access.denied`;
		// "contains": knee.researcher@… matches too
		const { rows } = await app.sql.query<{ n: string }>(
			`SELECT count(*) AS n FROM audit_events WHERE position($1 in actor_label) > 0 AND action LIKE 'access.denied%'`,
			[PERSONAS.researcherA]
		);
		const total = Number(rows[0].n);
		expect(total).toBeGreaterThan(55);
		const one = auditRows(await (await get(q, app.cookies.admin)).text());
		const twoHtml = await (await get(`${q}&page=2`, app.cookies.admin)).text();
		const two = auditRows(twoHtml);
		expect(one).toHaveLength(50);
		expect(two).toHaveLength(Math.min(50, total - 50));
		const times = [...one, ...two].map((r) => r.at);
		expect(times).toEqual([...times].sort().reverse());
		expect(twoHtml).toContain(`Events 51–${50 + two.length} of ${total}`);
	});

	it('exports the filtered rows as CSV with a header row', async () => {
		const res = await get('/audit/export.csv?outcome=denied', app.cookies.admin);
		expect(res.status).toBe(200);
		expect(res.headers.get('content-type')).toMatch(/^text\/csv/);
		expect(res.headers.get('content-disposition')).toMatch(/^attachment; filename="momentry-audit-[\d-]+\.csv"$/);
		const table = parseCsv(await res.text());
		expect(table[0]).toEqual([...CSV_COLUMNS]);
		const { rows } = await app.sql.query<{ n: string }>(`SELECT count(*) AS n FROM audit_events WHERE outcome = 'denied'`);
		const body = table.slice(1);
		expect(body.length).toBe(Number(rows[0].n));
		expect(body.length).toBeGreaterThan(50); // more than one page: the export is not limited to a page
		const outcome = CSV_COLUMNS.indexOf('outcome');
		expect(body.every((r) => r[outcome] === 'denied' && r.length === CSV_COLUMNS.length)).toBe(true);
		const details = JSON.parse(body[0][CSV_COLUMNS.indexOf('details')]);
		expect(details).toHaveProperty('path');

		// the export itself is audited
		const { rows: exported } = await app.sql.query(
			`SELECT details FROM audit_events WHERE action = 'audit.exported' AND actor_label = $1`,
			[PERSONAS.admin]
		);
		expect(exported.length).toBeGreaterThan(0);
		expect(exported.at(-1).details).toMatchObject({ filter: { outcome: 'denied' } });

		const none = parseCsv(await (await get('/audit/export.csv?study=NO-SUCH-STUDY', app.cookies.admin)).text());
		expect(none).toEqual([[...CSV_COLUMNS]]);
	});

	it('writes CSV fields that a spreadsheet reads as text', () => {
		expect(csvField('plain')).toBe('plain');
		expect(csvField('a,b')).toBe('"a,b"');
		expect(csvField('say "hi"')).toBe('"say ""hi"""');
		expect(csvField('=HYPERLINK("x")')).toBe(`"'=HYPERLINK(""x"")"`);
		expect(csvField('@cmd')).toBe("'@cmd");
		expect(csvField(null)).toBe('');
		expect(parseAuditQuery(new URLSearchParams('from=2026-02-31&page=-3')).filter.from).toBe('');
		expect(parseAuditQuery(new URLSearchParams('page=-3')).page).toBe(1);
	});
});

describe('sessions of one account', () => {
	it('changing the password checks the current one, is audited, and signs every session out', async () => {
		const email = PERSONAS.technicianA;
		const cookie = app.cookies.technicianA;
		const next = 'shelf reach tablet lichen';

		const wrong = await post('/account?/password', cookie, { current: 'not my password', next, repeat: next });
		expect(wrong.status).toBe(400);
		expect(await wrong.text()).toContain('That is not your current password');
		const short = await post('/account?/password', cookie, { current: DEMO_PASSWORD, next: 'short', repeat: 'short' });
		expect(short.status).toBe(400);
		expect(await short.text()).toContain('at least 12 characters');
		const differ = await post('/account?/password', cookie, { current: DEMO_PASSWORD, next, repeat: `${next}!` });
		expect(differ.status).toBe(400);
		expect(await differ.text()).toContain('The two new passwords differ');
		expect((await get('/account', cookie)).status).toBe(200);

		const ok = await post('/account?/password', cookie, {
			current: DEMO_PASSWORD,
			next,
			repeat: next,
			redirectTo: '/account/password-changed'
		});
		expect([302, 303]).toContain(ok.status);
		expect(ok.headers.get('location')).toMatch(/\/account\/password-changed$/);

		const after = await get('/account', cookie);
		expect(after.status).toBe(303);
		expect(after.headers.get('location')).toMatch(/^\/signin/);
		expect((await signInAs(app.base, email, DEMO_PASSWORD)).cookie).toBe('');
		const fresh = await signInAs(app.base, email, next);
		expect(fresh.cookie).not.toBe('');
		expect((await get('/account', fresh.cookie)).status).toBe(200);

		const { rows } = await app.sql.query<{ outcome: string; details: Record<string, unknown> }>(
			`SELECT outcome, details FROM audit_events WHERE action = 'auth.password-changed' AND actor_label = $1 ORDER BY id`,
			[email]
		);
		expect(rows.map((r) => r.outcome)).toEqual(['failed', 'ok']);
		expect(rows[1].details).toMatchObject({ hadPassword: true, signedOutEverywhere: true });
		// the hash is never written to the log
		expect(JSON.stringify(rows)).not.toMatch(/argon2/);
	});

	it('"sign out everywhere" makes an older cookie of the same person stop working', async () => {
		const older = app.cookies.piA;
		const newer = (await signInAs(app.base, PERSONAS.piA)).cookie;
		expect(newer).not.toBe('');
		expect((await get('/studies', older)).status).toBe(200);

		const out = await post('/signout', newer, { everywhere: 'yes', redirectTo: '/' });
		expect([302, 303]).toContain(out.status);

		const res = await get('/studies', older);
		expect(res.status).toBe(303);
		expect(res.headers.get('location')).toMatch(/^\/signin\?next=%2Fstudies/);
		expect((await get('/studies', newer)).status).toBe(303);
		const { rows } = await app.sql.query(`SELECT 1 FROM audit_events WHERE action = 'auth.sign-out-everywhere' AND actor_label = $1`, [
			PERSONAS.piA
		]);
		expect(rows).toHaveLength(1);
	});
});
