// Participant CSV import against the built app on a fresh seeded database: the dry run's preview and row-level
// problems, consecutive codes, all-or-nothing import (also when only the database sees the problem), and roles.
import { describe, expect, it } from 'vitest';
import fs from 'node:fs';
import { useApp } from './app-under-test';
import { checkImportText, describeProblem, IMPORT_CHUNK, IMPORT_MAX_ROWS } from '../../src/lib/server/participants/import';

const SAMPLE = 'tests/fixtures/participants/import-sample.csv';
const app = useApp('participant_import');

const page = () => `/studies/${app.ids.studyA}/participants/import`;
const headers = (cookie: string) => ({ cookie, origin: app.base, accept: 'text/html' });

/** Sends a file to "Check file" as a browser does (multipart form). */
async function check(content: string | Uint8Array, cookie = app.cookies.technicianA, name = 'list.csv') {
	const body = new FormData();
	body.set('file', new Blob([content as BlobPart], { type: 'text/csv' }), name);
	const res = await fetch(app.base + page() + '?/check', { method: 'POST', body, headers: headers(cookie), redirect: 'manual' });
	const raw = await res.text();
	return { status: res.status, raw, html: decode(raw) };
}

/** The hidden fields of the import form in a check's page, as a browser would send them back. */
function importForm(shown: { raw: string }): FormData {
	const form = shown.raw.match(/<form[^>]*action="\?\/import"[\s\S]*?<\/form>/)?.[0];
	if (!form) throw new Error('the check shows no import form');
	const body = new FormData();
	for (const m of form.matchAll(/<input type="hidden" name="(\w+)" value="([^"]*)"/g)) body.set(m[1], decode(m[2]));
	return body;
}
const runImport = async (body: FormData, cookie = app.cookies.technicianA) => {
	const res = await fetch(app.base + page() + '?/import', { method: 'POST', body, headers: headers(cookie), redirect: 'manual' });
	const raw = await res.text();
	return { status: res.status, location: res.headers.get('location'), raw, html: decode(raw) };
};

/** Undoes HTML escaping (attribute values and text), so that tests compare the words a person reads. */
function decode(html: string): string {
	return html
		.replace(/&#(\d+);/g, (_, n) => String.fromCodePoint(Number(n)))
		.replace(/&#x([0-9a-f]+);/gi, (_, n) => String.fromCodePoint(parseInt(n, 16)))
		.replace(/&quot;/g, '"')
		.replace(/&lt;/g, '<')
		.replace(/&gt;/g, '>')
		.replace(/&amp;/g, '&');
}

const counter = async () =>
	(await app.sql.query(`SELECT next_participant_number AS n FROM studies WHERE id = $1`, [app.ids.studyA])).rows[0].n as number;
const count = async () => (await app.sql.query(`SELECT count(*)::int AS n FROM participants`)).rows[0].n as number;
const code = (n: number) => `ALD-${String(n).padStart(3, '0')}`;

describe('importing a good file', () => {
	it('previews every row with the code it would get, saves nothing on the check, then imports with consecutive codes', async () => {
		const first = await counter();
		const before = await count();
		const sample = fs.readFileSync(SAMPLE, 'utf8');
		const checked = await check(sample, app.cookies.technicianA, 'import-sample.csv');
		expect(checked.status).toBe(200);
		const preview = [
			...checked.html.matchAll(/data-testid="preview-row" data-state="(\w+)">\s*<td[^>]*>(\d+)<\/td>\s*<td[^>]*>(ALD-\d+)<\/td>/g)
		].map((m) => [m[1], Number(m[2]), m[3]]);
		// rows are numbered as in the file (header = row 1)
		expect(preview).toEqual([2, 3, 4, 5, 6].map((row, i) => ['ok', row, code(first + i)]));
		expect(checked.html).toContain('Import 5 participants');
		expect(checked.html).toContain('Halvard Tiensuu-Mbeki');
		expect(await count()).toBe(before);
		expect(await counter()).toBe(first);

		const done = await runImport(importForm(checked));
		expect(done.status).toBe(303);
		expect(done.location).toBe(`/studies/${app.ids.studyA}/participants?imported=5&first=${code(first)}&last=${code(first + 4)}`);
		const rows = (
			await app.sql.query(
				`SELECT p.code, p.sex, p.birth_year, p.body_mass_kg, p.stature_m, p.dominant_side, p.notes, pp.full_name, pp.email, pp.phone
				 FROM participants p JOIN participant_personal pp ON pp.participant_id = p.id WHERE p.study_id = $1 AND p.code >= $2 ORDER BY p.code`,
				[app.ids.studyA, code(first)]
			)
		).rows;
		expect(rows.map((r) => r.code)).toEqual([0, 1, 2, 3, 4].map((i) => code(first + i)));
		expect(rows[0]).toEqual({
			code: code(first),
			sex: 'female',
			birth_year: 1991,
			body_mass_kg: 63.4,
			stature_m: 1.67,
			dominant_side: 'right',
			notes: 'night shift; picks from top shelves',
			full_name: 'Halvard Tiensuu-Mbeki',
			email: 'halvard.tiensuu@example.org',
			phone: '+1 555 0211'
		});
		// a quoted value with a comma, an empty birth year, a missing e-mail
		expect(rows[2].notes).toBe('former forklift driver, back pain resolved');
		expect(rows[4]).toMatchObject({ birth_year: null, dominant_side: 'right', phone: null });
		expect(rows[3]).toMatchObject({ full_name: 'Philippa Nørgaard-Esteves', email: null, dominant_side: null });
		expect(await counter()).toBe(first + 5);

		const audit = (
			await app.sql.query(
				`SELECT action, details FROM audit_events WHERE action IN ('participant.created', 'participants.imported') AND study_id = $1 ORDER BY id`,
				[app.ids.studyA]
			)
		).rows;
		const created = audit.filter((a) => a.action === 'participant.created' && a.details.via === 'import');
		expect(created.map((a) => [a.details.code, a.details.row])).toEqual([2, 3, 4, 5, 6].map((row, i) => [code(first + i), row]));
		expect(audit.filter((a) => a.action === 'participants.imported').map((a) => a.details)).toEqual([
			expect.objectContaining({ count: 5, firstCode: code(first), lastCode: code(first + 4), fileName: 'import-sample.csv' })
		]);
		// the audit names the personal fields entered, never their values
		expect(JSON.stringify(audit)).not.toMatch(/Halvard|halvard|0211/);

		const list = decode(await (await fetch(app.base + done.location!, { headers: headers(app.cookies.technicianA) })).text());
		expect(list).toContain(`✓ 5 participants imported: ${code(first)} to ${code(first + 4)}.`);
	});

	it('accepts semicolons or tabs, a byte-order mark, CRLF line ends and header names in any case and order', async () => {
		const first = await counter();
		const semi = '\uFEFFStature_M;SEX;Body_Mass_Kg;Notes\r\n1.71;male;80.5;"two\r\nlines"\r\n\r\n1.60;female;55;\r\n';
		const checked = await check(semi);
		expect(checked.status).toBe(200);
		expect(checked.html).toContain('semicolon-separated, 2 participant rows');
		// the quoted value spans rows 2-3 and a blank line follows, so the next participant is on row 5
		expect([...checked.html.matchAll(/data-testid="preview-row" data-state="ok">\s*<td[^>]*>(\d+)</g)].map((m) => Number(m[1]))).toEqual([
			2, 5
		]);
		expect((await runImport(importForm(checked))).status).toBe(303);
		const rows = (
			await app.sql.query(`SELECT code, sex, body_mass_kg, notes FROM participants WHERE study_id = $1 AND code >= $2 ORDER BY code`, [
				app.ids.studyA,
				code(first)
			])
		).rows;
		expect(rows).toEqual([
			{ code: code(first), sex: 'male', body_mass_kg: 80.5, notes: 'two\nlines' },
			{ code: code(first + 1), sex: 'female', body_mass_kg: 55, notes: null }
		]);

		const tab = 'sex\tbody_mass_kg\tstature_m\nnot reported\t70\t1.75\n';
		const t = await check(tab);
		expect(t.status).toBe(200);
		expect(t.html).toContain('tab-separated, 1 participant row');
	});
});

describe('a file with bad rows', () => {
	const bad = [
		'sex,birth_year,body_mass_kg,stature_m,dominant_side,notes',
		'female,1990,61.0,1.65,right,', // row 2: fine
		'female,1990,12,1.65,right,', // row 3: mass
		'unknown,1890,70,tall,middle,', // row 4: sex, birth year, stature, side
		'male,1985,70,1.80,left', // row 5: a value short
		',,,,,', // row 6: blank (skipped, still counted)
		'male,1985,,1.80,left,"x"' // row 7: mass missing
	].join('\n');

	it('reports every problem by row and column and imports nothing; the counter stays', async () => {
		const first = await counter();
		const before = await count();
		const audits = (await app.sql.query(`SELECT count(*)::int AS n FROM audit_events`)).rows[0].n;
		const checked = await check(bad);
		expect(checked.status).toBe(400);
		const problems = [...checked.html.matchAll(/<li>(row [^<]*)<\/li>/g)].map((m) => m[1]);
		expect(problems).toEqual([
			'row 3, column body_mass_kg: body mass must be between 20 and 300 kg (got 12 kg)',
			'row 4, column sex: sex must be "female", "male" or "not reported"',
			'row 4, column stature_m: stature must be a number (m)',
			`row 4, column birth_year: Enter a year between 1900 and ${new Date().getUTCFullYear()}, or leave it empty.`,
			'row 4, column dominant_side: Choose left, right or not recorded.',
			'row 5: 5 values, but the header has 6 columns. Check for a missing value or a comma inside a value without quotes.',
			'row 7, column body_mass_kg: Enter the body mass in kg.'
		]);
		expect(checked.html).toContain('Nothing was imported. 7 problems');
		expect(checked.html).not.toContain('action="?/import"');
		expect(await count()).toBe(before);
		expect(await counter()).toBe(first);

		// a hand-made import of the same file (right hash, no check) is checked again and refused
		const { canonicalText, sha256Hex } = await import('../../src/lib/server/participants/import');
		const forged = new FormData();
		forged.set('content', bad);
		forged.set('sha256', sha256Hex(canonicalText(bad)));
		forged.set('fileName', 'bad.csv');
		forged.set('firstNumber', String(first));
		const res = await runImport(forged);
		expect(res.status).toBe(400);
		expect(res.html).toContain('row 3, column body_mass_kg: body mass must be between 20 and 300 kg (got 12 kg)');
		expect(await count()).toBe(before);
		expect(await counter()).toBe(first);
		// neither the dry run nor the refused import leaves a trace in the audit log
		expect((await app.sql.query(`SELECT count(*)::int AS n FROM audit_events`)).rows[0].n).toBe(audits);
	});

	it('names the column as the header writes it', async () => {
		const res = await check('SEX,Body_Mass_KG,stature_m\nfemale,500,1.6\n');
		expect(res.html).toContain('row 2, column Body_Mass_KG: body mass must be between 20 and 300 kg (got 500 kg)');
	});
});

describe('files that cannot be checked row by row', () => {
	const cases: [string, string | Uint8Array, number, string][] = [
		['an empty file', '', 400, 'The file is empty. It needs a header row'],
		['blank lines only', '\n \n', 400, 'The file is empty.'],
		['a header only', 'sex,body_mass_kg,stature_m\n', 400, 'The file has a header row but no participant rows.'],
		[
			'an unknown column',
			'sex,body_mass_kg,stature_m,shoe_size\nmale,70,1.7,44\n',
			400,
			"row 1, column shoe_size: “shoe_size” is not one of Momentry's columns. Use only sex, birth_year, body_mass_kg, stature_m, dominant_side, notes, full_name, email, phone."
		],
		[
			'a duplicate column',
			'sex,body_mass_kg,stature_m,Sex\nmale,70,1.7,male\n',
			400,
			'row 1, column Sex: columns 1 and 4 are both “sex”. Keep one of them.'
		],
		['a column without a name', 'sex,,body_mass_kg,stature_m\nmale,x,70,1.7\n', 400, 'row 1: column 2 has no name.'],
		[
			'a missing required column',
			'sex,body_mass_kg\nmale,70\n',
			400,
			'row 1: the header has no column stature_m, which is required (metres, 0.8–2.5, with a decimal point (1.68)).'
		],
		[
			'text that is not UTF-8',
			new Uint8Array([...Buffer.from('sex,body_mass_kg,stature_m,notes\nmale,70,1.7,'), 0xe9, 0x0a]),
			400,
			'list.csv is not UTF-8 text.'
		],
		[
			'too many rows',
			'sex,body_mass_kg,stature_m\n' + 'male,70,1.7\n'.repeat(IMPORT_MAX_ROWS + 1),
			400,
			'The file has 2,001 participant rows; import at most 2,000 at a time.'
		],
		[
			'a file over the size limit',
			'sex,body_mass_kg,stature_m,notes\n' + `male,70,1.7,${'x'.repeat(1000)}\n`.repeat(420),
			413,
			'KB; the limit is 400 KB (about 2,000 rows). Split the file'
		]
	];
	for (const [what, content, status, message] of cases) {
		it(`refuses ${what} with a precise message`, async () => {
			const before = await count();
			const res = await check(content);
			expect(res.status).toBe(status);
			expect(res.html).toContain(message);
			expect(res.html).not.toContain('action="?/import"');
			expect(await count()).toBe(before);
		});
	}

	it('refuses a check without a file, and an import whose file changed after the check', async () => {
		const none = await fetch(app.base + page() + '?/check', {
			method: 'POST',
			body: new FormData(),
			headers: headers(app.cookies.piA),
			redirect: 'manual'
		});
		expect(none.status).toBe(400);
		expect(await none.text()).toContain('Choose a CSV file first.');
		const checked = await check('sex,body_mass_kg,stature_m\nmale,70,1.7\n');
		const form = importForm(checked);
		form.set('content', 'sex,body_mass_kg,stature_m\nmale,70,1.7\nmale,71,1.8\n');
		const before = await count();
		const res = await runImport(form);
		expect(res.status).toBe(400);
		expect(res.html).toContain('The checked file changed on its way back. Choose the file and check it again.');
		expect(await count()).toBe(before);
	});
});

describe('all or nothing', () => {
	it('rolls back every row when the database refuses one mid-import (a code already taken)', async () => {
		const first = await counter();
		const before = await count();
		// a participant of another study already holds the code row 122 would get: only the unique index sees it, after
		// the first IMPORT_CHUNK rows have been written inside the transaction
		const blocked = code(first + 120);
		await app.sql.query(
			`INSERT INTO participants (id, study_id, code, sex, body_mass_kg, stature_m) VALUES (gen_random_uuid(), $1, $2, 'male', 75, 1.75)`,
			[app.ids.studyB, blocked]
		);
		const createdBefore = (await app.sql.query(`SELECT count(*)::int AS n FROM audit_events WHERE action = 'participant.created'`)).rows[0]
			.n;
		const named = [
			'female,60,1.6,Wilhelmina Corse',
			'male,70,1.7,Tobiah Quennell',
			'male,80,1.8,Ansel Drummond',
			'female,65,1.65,Marit Oyelaran'
		];
		const file =
			'sex,body_mass_kg,stature_m,full_name\n' +
			[...named, ...Array.from({ length: 146 }, (_, i) => `male,${60 + (i % 30)},1.7,`)].join('\n');
		expect(IMPORT_CHUNK).toBeLessThan(120);
		const checked = await check(file);
		expect(checked.status).toBe(200);
		const res = await runImport(importForm(checked));
		expect(res.status).toBe(409);
		expect(res.html).toContain(`Nothing was imported: the database refused the import because code ${blocked} is already in use`);
		expect(res.html).not.toContain('action="?/import"');
		expect(await count()).toBe(before + 1);
		const codes = Array.from({ length: 150 }, (_, i) => code(first + i)).filter((c) => c !== blocked);
		expect((await app.sql.query(`SELECT count(*)::int AS n FROM participants WHERE code = ANY($1)`, [codes])).rows[0].n).toBe(0);
		expect(
			(
				await app.sql.query(
					`SELECT count(*)::int AS n FROM participant_personal WHERE full_name IN ('Wilhelmina Corse', 'Tobiah Quennell')`
				)
			).rows[0].n
		).toBe(0);
		expect((await app.sql.query(`SELECT count(*)::int AS n FROM audit_events WHERE action = 'participant.created'`)).rows[0].n).toBe(
			createdBefore
		);
		expect(await counter()).toBe(first);
		const failed = (await app.sql.query(`SELECT outcome, details FROM audit_events WHERE action = 'participants.import.failed'`)).rows;
		expect(failed).toEqual([{ outcome: 'failed', details: expect.objectContaining({ reason: `code ${blocked} is already in use` }) }]);
		expect(JSON.stringify(failed)).not.toContain('Wilhelmina');
		await app.sql.query(`DELETE FROM participants WHERE code = $1`, [blocked]);
	});

	it('imports nothing when participants were added after the check, and shows the new codes', async () => {
		const checked = await check('sex,body_mass_kg,stature_m\nmale,70,1.7\nfemale,60,1.6\n');
		const first = await counter();
		const added = await fetch(`${app.base}/studies/${app.ids.studyA}/participants/new`, {
			method: 'POST',
			body: new URLSearchParams({
				sex: 'male',
				bodyMassKg: '72',
				statureM: '1.77',
				birthYear: '',
				dominantSide: '',
				notes: '',
				fullName: '',
				email: '',
				phone: ''
			}),
			headers: { ...headers(app.cookies.piA), 'content-type': 'application/x-www-form-urlencoded' },
			redirect: 'manual'
		});
		expect(added.status).toBe(303);
		const before = await count();
		const res = await runImport(importForm(checked));
		expect(res.status).toBe(409);
		expect(res.html).toContain('Nothing was imported: participants were added since you checked the file');
		expect(res.html).toContain(`>${code(first + 1)}</td>`);
		expect(await count()).toBe(before);
		// importing again from the refreshed page takes the new codes
		const again = await runImport(importForm(res));
		expect(again.status).toBe(303);
		expect(again.location).toContain(`first=${code(first + 1)}&last=${code(first + 2)}`);
	});

	it(`imports the largest allowed file (${IMPORT_MAX_ROWS} rows) in one transaction`, async () => {
		const first = await counter();
		const rows = Array.from(
			{ length: IMPORT_MAX_ROWS },
			(_, i) =>
				`${i % 2 ? 'male' : 'female'},${1950 + (i % 50)},${(50 + (i % 40)).toFixed(1)},${(1.55 + (i % 40) / 100).toFixed(2)},right,batch ${i}`
		);
		const checked = await check('sex,birth_year,body_mass_kg,stature_m,dominant_side,notes\n' + rows.join('\n') + '\n');
		expect(checked.status).toBe(200);
		const started = performance.now();
		const res = await runImport(importForm(checked));
		const ms = performance.now() - started;
		expect(res.status).toBe(303);
		console.log(`imported ${IMPORT_MAX_ROWS} participants in ${ms.toFixed(0)} ms`);
		expect(await counter()).toBe(first + IMPORT_MAX_ROWS);
		const last = (await app.sql.query(`SELECT code, notes FROM participants WHERE code = $1`, [code(first + IMPORT_MAX_ROWS - 1)])).rows[0];
		expect(last).toEqual({ code: code(first + IMPORT_MAX_ROWS - 1), notes: `batch ${IMPORT_MAX_ROWS - 1}` });
	});
});

describe('who may import', () => {
	it('researchers get 403 for the page and both steps; members of another study 404; nothing is saved', async () => {
		const before = await count();
		expect((await fetch(app.base + page(), { headers: headers(app.cookies.researcherA), redirect: 'manual' })).status).toBe(403);
		expect((await check(fs.readFileSync(SAMPLE, 'utf8'), app.cookies.researcherA)).status).toBe(403);
		const checked = await check(fs.readFileSync(SAMPLE, 'utf8'), app.cookies.piA);
		expect((await runImport(importForm(checked), app.cookies.researcherA)).status).toBe(403);
		expect((await check(fs.readFileSync(SAMPLE, 'utf8'), app.cookies.memberB)).status).toBe(404);
		expect(await count()).toBe(before);
		const denied = (
			await app.sql.query(
				`SELECT details FROM audit_events WHERE action = 'access.denied' AND details->>'attempted' = 'participant.import'`
			)
		).rows;
		expect(denied.length).toBeGreaterThanOrEqual(3);
	});

	it('the participant list links to the import for PI and technicians only', async () => {
		const link = `href="/studies/${app.ids.studyA}/participants/import"`;
		for (const [persona, shown] of [
			['piA', true],
			['technicianA', true],
			['researcherA', false]
		] as const) {
			const html = await (
				await fetch(`${app.base}/studies/${app.ids.studyA}/participants`, { headers: headers(app.cookies[persona]) })
			).text();
			expect(html.includes(link), persona).toBe(shown);
		}
	});

	// every current role that may import may also edit personal data, so the refusal is checked on the rule itself
	it('refuses personal columns, naming the column, for a role without personal edit', () => {
		const file = 'sex,body_mass_kg,stature_m,Email\nfemale,60,1.6,someone@example.org\n';
		const refused = checkImportText(file, { mayImportPersonal: false });
		expect(refused.ok).toBe(false);
		expect(refused.fileProblems.map(describeProblem)).toEqual([
			'row 1, column Email: email is personal data, which your role may not import. Remove the email column (and any other of full_name, email, phone) and check the file again.'
		]);
		expect(refused.rows).toEqual([]);
		const allowed = checkImportText(file, { mayImportPersonal: true });
		expect(allowed.ok).toBe(true);
		expect(allowed.rows[0].input).toMatchObject({ email: 'someone@example.org', fullName: null });
		// research-only files are fine for such a role
		expect(checkImportText('sex,body_mass_kg,stature_m\nfemale,60,1.6\n', { mayImportPersonal: false }).ok).toBe(true);
	});
});
