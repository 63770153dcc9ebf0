// E-mailed consent against the built app, real PostgreSQL and maildev: invitations, single-use and expiring links,
// the form version recorded, decline and withdrawal, flags on existing runs, enforcement, and what researchers see.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startApp, type AppUnderTest } from './app-under-test';
import type { InboxMessage } from './helpers';

let app: AppUnderTest;
let studyA: string;

beforeAll(async () => {
	app = await startApp('consent');
	studyA = app.ids.studyA;
	// the enforcement functions are called in this process too, against the app's database
	process.env.DATABASE_URL = app.url;
	(await import('../../src/lib/server/db/index')).db(app.url);
});
afterAll(async () => {
	const { closeDb } = await import('../../src/lib/server/db/index');
	await closeDb();
	await app?.close();
});

const get = (path: string, cookie = '') => fetch(app.base + path, { headers: { cookie, accept: 'text/html' }, redirect: 'manual' });
const post = (path: string, form: Record<string, string>, cookie = '') =>
	fetch(app.base + path, {
		method: 'POST',
		body: new URLSearchParams(form),
		redirect: 'manual',
		headers: { cookie, origin: app.base, accept: 'text/html', 'content-type': 'application/x-www-form-urlencoded' }
	});
const one = async <T = Record<string, unknown>>(sql: string, params: unknown[] = []) => (await app.sql.query(sql, params)).rows[0] as T;

/** Every message to `address` in maildev, oldest first. */
async function inbox(address: string): Promise<InboxMessage[]> {
	const all = (await (await fetch(`${process.env.MAILDEV_URL}/api/email`)).json()) as (InboxMessage & { time: string })[];
	return all
		.filter((m) => m.to?.some((t) => t.address.toLowerCase() === address.toLowerCase()))
		.sort((a, b) => Date.parse(a.time) - Date.parse(b.time));
}
/** Waits for message number `n` (1-based) to `address`. */
async function nthMail(address: string, n: number, timeoutMs = 15_000): Promise<InboxMessage> {
	const deadline = Date.now() + timeoutMs;
	for (;;) {
		const list = await inbox(address);
		if (list.length >= n) return list[n - 1];
		if (Date.now() > deadline) throw new Error(`message ${n} to ${address} did not arrive (have ${list.length})`);
		await new Promise((r) => setTimeout(r, 200));
	}
}
const linkIn = (m: InboxMessage, kind: 'consent' | 'withdraw') => {
	const re = kind === 'consent' ? /https?:\/\/\S+\/consent\/([A-Za-z0-9_-]{43})/ : /https?:\/\/\S+\/consent\/withdraw\/([A-Za-z0-9_-]{43})/;
	const hit = (m.text ?? '').match(re);
	if (!hit) throw new Error(`no ${kind} link in: ${m.text}`);
	return hit[1];
};

let counter = 0;
/** A new participant of SHELF-REACH made through the form (with or without an e-mail address). */
async function newParticipant(email: string | null): Promise<{ id: string; code: string }> {
	counter += 1;
	const res = await post(
		`/studies/${studyA}/participants/new`,
		{
			sex: 'female',
			bodyMassKg: '60',
			statureM: '1.65',
			birthYear: '1990',
			dominantSide: 'right',
			notes: '',
			fullName: `Consent Tester ${counter}`,
			email: email ?? '',
			phone: ''
		},
		app.cookies.technicianA
	);
	expect(res.status).toBe(303);
	const code = decodeURIComponent(res.headers.get('location')!.split('added=')[1]);
	const { id } = await one<{ id: string }>(`SELECT id FROM participants WHERE code = $1`, [code]);
	return { id, code };
}
const consentPath = (pid: string) => `/studies/${studyA}/participants/${pid}/consent`;
async function invite(pid: string, action: 'invite' | 'resend' | 'remind' = 'invite', cookie = app.cookies.technicianA) {
	return post(`${consentPath(pid)}?/${action}`, {}, cookie);
}
/** A new participant with an e-mail address, invited: the participant and the token of the consent link mailed to them. */
async function invitedParticipant(address: string) {
	const p = await newParticipant(address);
	await invite(p.id);
	return { p, token: linkIn(await nthMail(address, 1), 'consent') };
}
async function formVersionIds(): Promise<{ id: string; version: number }[]> {
	return (await app.sql.query(`SELECT id, version FROM consent_form_versions WHERE study_id = $1 ORDER BY version`, [studyA])).rows;
}
async function stateOf(pid: string): Promise<string> {
	return (await one<{ consent_state: string }>(`SELECT consent_state FROM participants WHERE id = $1`, [pid])).consent_state;
}
const today = () => new Date().toISOString().slice(0, 10);
async function agree(token: string, pid: string, formVersionId: string, confirmations: number, extra: Record<string, string> = {}) {
	const form: Record<string, string> = {
		participantId: pid,
		formVersionId,
		fullName: 'Wilhelmina Consent-Giver',
		signedOn: today(),
		...extra
	};
	for (let i = 0; i < confirmations; i++) form[`confirm-${i}`] = 'yes';
	return post(`/consent/${token}?/consent`, form);
}

describe('the demo seed', () => {
	it('has ALD-001..004, KNE-001..002 and WLK-001..002 consented under version 1, ALD-005 invited, KNE-003 withdrawn', async () => {
		const rows = (
			await app.sql.query(
				`SELECT p.code, p.consent_state, v.version FROM participants p LEFT JOIN consent_form_versions v ON v.id = p.consent_form_version_id ORDER BY p.code`
			)
		).rows;
		const by = Object.fromEntries(rows.map((r) => [r.code, `${r.consent_state}/${r.version}`]));
		expect(by).toEqual({
			'ALD-001': 'consented/1',
			'ALD-002': 'consented/1',
			'ALD-003': 'consented/1',
			'ALD-004': 'consented/1',
			'ALD-005': 'invited/1',
			'KNE-001': 'consented/1',
			'KNE-002': 'consented/1',
			'KNE-003': 'withdrawn/1',
			'WLK-001': 'consented/1',
			'WLK-002': 'consented/1'
		});
		const { consentStateOf } = await import('../../src/lib/server/consent/check');
		expect((await consentStateOf(app.ids.participantA)).state).toBe('consented');
	});
	it('shows the consent state by word in the participant list and on the participant page', async () => {
		const list = await (await get(`/studies/${studyA}/participants`, app.cookies.researcherA)).text();
		expect(list).toMatch(/data-state="consented"/);
		expect(list).toMatch(/data-state="invited"/);
		const page = await (await get(`/studies/${studyA}/participants/${app.ids.participantA}`, app.cookies.researcherA)).text();
		expect(page).toContain('data-testid="consent-line"');
		expect(page).toMatch(/consented/);
	});
});

describe('invitations', () => {
	it('e-mails a single-use link with the withdraw link, ethics reference and contact; the state and history change', async () => {
		const p = await newParticipant('first.invitee@example.org');
		expect(await stateOf(p.id)).toBe('not_invited');
		const res = await invite(p.id);
		expect(res.status).toBe(303);
		expect(res.headers.get('location')).toContain('sent=invitation');
		const mail = await nthMail('first.invitee@example.org', 1);
		expect(mail.text).toContain('ACU-HREC-2026-041');
		expect(mail.text).toContain('pi@alder-creek.example');
		expect(mail.text).toContain('Tomasz Okafor');
		expect(mail.text).toContain('14 days');
		const token = linkIn(mail, 'consent');
		linkIn(mail, 'withdraw');
		expect(await stateOf(p.id)).toBe('invited');
		// only the hash is stored
		const stored = (await app.sql.query(`SELECT token_hash FROM consent_invitations WHERE participant_id = $1`, [p.id])).rows.map(
			(r) => r.token_hash
		);
		expect(stored).toHaveLength(2);
		expect(stored.join()).not.toContain(token);
		const ev = (await app.sql.query(`SELECT from_state, to_state, actor_label FROM consent_events WHERE participant_id = $1`, [p.id])).rows;
		expect(ev).toEqual([{ from_state: 'not_invited', to_state: 'invited', actor_label: 'technician@alder-creek.example' }]);
		expect(
			(await one<{ n: number }>(`SELECT count(*)::int AS n FROM audit_events WHERE action = 'consent.invited' AND record_id = $1`, [p.id]))
				.n
		).toBe(1);
	});

	it('refuses to invite a participant without an e-mail address, with a message saying what to do', async () => {
		const p = await newParticipant(null);
		const res = await invite(p.id);
		expect(res.status).toBe(409);
		expect(await res.text()).toContain(`${p.code} has no e-mail address in their personal data`);
		expect(await stateOf(p.id)).toBe('not_invited');
		const page = await (await get(consentPath(p.id), app.cookies.technicianA)).text();
		expect(page).toContain('data-testid="consent-no-email"');
	});

	it('refuses researchers (403) and another study’s member (404); the invitation is not sent', async () => {
		const p = await newParticipant('not.by.researcher@example.org');
		expect((await invite(p.id, 'invite', app.cookies.researcherA)).status).toBe(403);
		expect((await invite(p.id, 'invite', app.cookies.memberB)).status).toBe(404);
		expect(await stateOf(p.id)).toBe('not_invited');
	});

	it('a resend or reminder makes earlier consent links stop working', async () => {
		const address = 'resend.me@example.org';
		const p = await newParticipant(address);
		expect((await invite(p.id)).status).toBe(303);
		const first = linkIn(await nthMail(address, 1), 'consent');
		// a second invitation while one is open is refused: resend or remind instead
		expect((await invite(p.id, 'invite')).status).toBe(409);
		expect((await invite(p.id, 'resend')).status).toBe(303);
		const second = linkIn(await nthMail(address, 2), 'consent');
		expect((await invite(p.id, 'remind', app.cookies.piA)).status).toBe(303);
		const reminder = await nthMail(address, 3);
		expect(reminder.subject).toMatch(/^Reminder:/);
		const third = linkIn(reminder, 'consent');
		for (const old of [first, second]) {
			const html = await (await get(`/consent/${old}`)).text();
			expect(html).toContain('data-reason="superseded"');
		}
		expect(await (await get(`/consent/${third}`)).text()).toContain('data-testid="consent-form"');
		const ev = (await app.sql.query(`SELECT from_state, to_state FROM consent_events WHERE participant_id = $1 ORDER BY id`, [p.id])).rows;
		expect(ev.map((e) => `${e.from_state}>${e.to_state}`)).toEqual(['not_invited>invited', 'invited>invited', 'invited>invited']);
	});
});

describe('the consent link', () => {
	it('shows the study, its ethics reference, whom to contact, the current form and its confirmations, without an account', async () => {
		const address = 'reader@example.org';
		const { p, token } = await invitedParticipant(address);
		const res = await get(`/consent/${token}`);
		expect(res.status).toBe(200);
		expect(res.headers.get('cache-control')).toBe('no-store');
		const html = await res.text();
		expect(html).toContain('Overhead shelving reach in warehouse workers');
		expect(html).toContain('ACU-HREC-2026-041');
		expect(html).toContain('pi@alder-creek.example');
		expect(html).toContain('I agree that my movements are recorded and analysed under a code.');
		expect(html).toContain('data-version="1"');
		expect(html).toContain(`value="${p.id}"`);
		// looking does not use the link up
		expect(await stateOf(p.id)).toBe('invited');
	});

	it('records consent once: a reused link is refused, a wrong participant is refused, missing answers are refused with field messages', async () => {
		const address = 'giver@example.org';
		const { p, token } = await invitedParticipant(address);
		const other = await newParticipant('someone.else@example.org');
		const [v1] = await formVersionIds();

		// the form carries the participant it was shown for: another participant's id is refused, nothing recorded
		const wrong = await agree(token, other.id, v1.id, 3);
		expect(wrong.status).toBe(403);
		expect(await wrong.text()).toContain('does not belong to the link');
		expect(await stateOf(p.id)).toBe('invited');
		expect(await stateOf(other.id)).toBe('not_invited');

		// every confirmation must be ticked; the date must be today (± 1 day)
		const unticked = await agree(token, p.id, v1.id, 2);
		expect(unticked.status).toBe(400);
		expect(await unticked.text()).toContain('id="confirm-2-error"');
		const old = await agree(token, p.id, v1.id, 3, { signedOn: '2020-01-01' });
		expect(old.status).toBe(400);
		expect(await old.text()).toContain('id="signedOn-error"');
		const unnamed = await agree(token, p.id, v1.id, 3, { fullName: ' ' });
		expect(unnamed.status).toBe(400);
		expect(await stateOf(p.id)).toBe('invited');

		const ok = await agree(token, p.id, v1.id, 3);
		expect(ok.status).toBe(200);
		expect(await ok.text()).toContain('data-decision="consented"');
		expect(await stateOf(p.id)).toBe('consented');
		const rec = await one<{ decision: string; version: number; confirmations: string[]; signed_on: string; typed_name: string }>(
			`SELECT r.decision, v.version, r.confirmations, r.signed_on::text AS signed_on, s.typed_name FROM consent_records r JOIN consent_form_versions v ON v.id = r.form_version_id JOIN consent_signatures s ON s.record_id = r.id WHERE r.participant_id = $1`,
			[p.id]
		);
		expect(rec).toMatchObject({ decision: 'consented', version: 1, signed_on: today(), typed_name: 'Wilhelmina Consent-Giver' });
		expect(rec.confirmations).toHaveLength(3);

		// reuse: the same link is refused, in the form and on the page, with the study contact
		const again = await agree(token, p.id, v1.id, 3);
		expect(again.status).toBe(410);
		const page = await (await get(`/consent/${token}`)).text();
		expect(page).toContain('data-reason="used"');
		expect(page).toContain('pi@alder-creek.example');
		expect((await one<{ n: number }>(`SELECT count(*)::int AS n FROM consent_records WHERE participant_id = $1`, [p.id])).n).toBe(1);

		// the confirmation e-mail carries a plain-text copy of what was agreed and a withdraw link
		const copy = await nthMail(address, 2);
		expect(copy.text).toContain('Consent form, version 1');
		expect(copy.text).toContain('The Alder Creek Movement Laboratory studies how warehouse workers reach');
		expect(copy.text).toContain('[x] I know that I can withdraw at any time without giving a reason.');
		expect(copy.text).toContain('Signed (typed name): Wilhelmina Consent-Giver');
		expect(copy.text).toContain(`Date: ${today()}`);
		expect(copy.text).toContain('ACU-HREC-2026-041');
		linkIn(copy, 'withdraw');
	});

	it('refuses an expired link calmly, with the study contact, and shows the participant as "expired"', async () => {
		const address = 'late@example.org';
		const { p, token } = await invitedParticipant(address);
		const [v1] = await formVersionIds();
		// 14 days pass
		await app.sql.query(
			`UPDATE consent_invitations SET expires_at = now() - interval '1 minute' WHERE participant_id = $1 AND purpose = 'consent'`,
			[p.id]
		);
		const html = await (await get(`/consent/${token}`)).text();
		expect(html).toContain('data-reason="expired"');
		expect(html).toContain('pi@alder-creek.example');
		expect((await agree(token, p.id, v1.id, 3)).status).toBe(410);
		const { consentStateOf } = await import('../../src/lib/server/consent/check');
		expect((await consentStateOf(p.id)).state).toBe('expired');
		const staff = await (await get(consentPath(p.id), app.cookies.technicianA)).text();
		expect(staff).toContain('data-state="expired"');
		const ev = (await app.sql.query(`SELECT to_state, actor_label FROM consent_events WHERE participant_id = $1 ORDER BY id`, [p.id])).rows;
		expect(ev.at(-1)).toEqual({ to_state: 'expired', actor_label: 'system' });
		// a new invitation is possible and its link works
		expect((await invite(p.id)).status).toBe(303);
		const fresh = linkIn(await nthMail(address, 2), 'consent');
		expect(await (await get(`/consent/${fresh}`)).text()).toContain('data-testid="consent-form"');
	});

	it('records the version that was shown: a version published after the page was shown is refused, asking to read again', async () => {
		const address = 'version.reader@example.org';
		const { p, token } = await invitedParticipant(address);
		const shown = await (await get(`/consent/${token}`)).text();
		const [v1] = await formVersionIds();
		expect(shown).toContain(`value="${v1.id}"`);
		// the PI publishes version 2 while the participant is reading version 1
		const pub = await post(
			`/studies/${studyA}/consent-forms?/publish`,
			{
				bodyMarkdown: '# Version two\n\nWe now also record a short video of your arm.',
				confirmations: 'I have read version two.\nI agree to the video.'
			},
			app.cookies.piA
		);
		expect(pub.status).toBe(303);
		const refused = await agree(token, p.id, v1.id, 3);
		expect(refused.status).toBe(409);
		const html = await refused.text();
		expect(html).toContain('updated to version 2 after you opened this page');
		// the page now shows version 2, and the link still works
		expect(html).toContain('data-version="2"');
		expect(await stateOf(p.id)).toBe('invited');
		const v2 = (await formVersionIds())[1];
		expect(v2.version).toBe(2);
		const ok = await agree(token, p.id, v2.id, 2);
		expect(ok.status).toBe(200);
		const rec = await one<{ version: number }>(
			`SELECT v.version FROM consent_records r JOIN consent_form_versions v ON v.id = r.form_version_id WHERE r.participant_id = $1`,
			[p.id]
		);
		expect(rec.version).toBe(2);
		expect(
			(
				await one<{ form_version: number }>(
					`SELECT form_version FROM consent_events WHERE participant_id = $1 AND to_state = 'consented'`,
					[p.id]
				)
			).form_version
		).toBe(2);
	});

	it('lets the participant decline from the same page; the decision is kept and confirmed by e-mail', async () => {
		const address = 'decliner@example.org';
		const { p, token } = await invitedParticipant(address);
		const current = (await formVersionIds()).at(-1)!;
		const res = await post(`/consent/${token}?/decline`, { participantId: p.id, formVersionId: current.id });
		expect(res.status).toBe(200);
		expect(await res.text()).toContain('data-decision="declined"');
		expect(await stateOf(p.id)).toBe('declined');
		expect((await nthMail(address, 2)).text).toContain('do not wish to take part');
		expect((await post(`/consent/${token}?/decline`, { participantId: p.id, formVersionId: current.id })).status).toBe(410);
	});
});

describe('withdrawal', () => {
	it('stops new work at once, flags existing runs for the PI (never deleted), and the PI decides per run', async () => {
		const address = 'withdrawer@example.org';
		const { p, token } = await invitedParticipant(address);
		const current = (await formVersionIds()).at(-1)!;
		const { requireValidConsent } = await import('../../src/lib/server/consent/check');
		// before consent: refused with a message naming the participant and the state
		await expect(requireValidConsent(p.id, 'upload')).rejects.toMatchObject({
			kind: 'conflict',
			message: `${p.code} has not given consent (state: invited); uploads are refused until they consent.`
		});
		expect((await agree(token, p.id, current.id, current.version === 1 ? 3 : 2)).status).toBe(200);
		await expect(requireValidConsent(p.id, 'run')).resolves.toBeUndefined();

		// some work done while consented: a session, a trial and a finished run
		const sha = 'a'.repeat(64);
		const { id: sessionId } = await one<{ id: string }>(
			`INSERT INTO sessions (study_id, participant_id, session_on, operator, task, setup) VALUES ($1, $2, current_date, 'Jonah Abernethy', 'reach', '{}'::jsonb) RETURNING id`,
			[studyA, p.id]
		);
		const { id: uploadId } = await one<{ id: string }>(
			`INSERT INTO raw_uploads (sha256, byte_size, file_name) VALUES ($1, 10, 'reach-01.csv') RETURNING id`,
			[sha]
		);
		const { id: trialId } = await one<{ id: string }>(
			`INSERT INTO trials (session_id, raw_upload_id, file_name, sha256, sample_hz, frame_count, duration_s) VALUES ($1, $2, 'reach-01.csv', $3, 100, 300, 2.99) RETURNING id`,
			[sessionId, uploadId, sha]
		);
		const { id: runId } = await one<{ id: string }>(
			`INSERT INTO runs (trial_id, state, raw_sha256, software_version) VALUES ($1, 'done', $2, 'test') RETURNING id`,
			[trialId, sha]
		);

		// the withdraw link from the confirmation e-mail
		const withdrawToken = linkIn(await nthMail(address, 2), 'withdraw');
		const page = await (await get(`/consent/withdraw/${withdrawToken}`)).text();
		expect(page).toContain('What withdrawing means');
		expect(page).toContain('ACU-HREC-2026-041');
		const res = await post(`/consent/withdraw/${withdrawToken}`, {});
		expect(res.status).toBe(200);
		expect(await res.text()).toContain('data-effect="withdraw"');
		expect(await stateOf(p.id)).toBe('withdrawn');
		expect((await nthMail(address, 3)).text).toContain('withdraw your consent');

		// new work is refused at once, with the reason
		await expect(requireValidConsent(p.id, 'approval')).rejects.toMatchObject({
			kind: 'conflict',
			message: expect.stringContaining(`${p.code} has withdrawn consent (state: withdrawn); approvals are refused`)
		});
		// the run is kept and flagged
		const run = await one<{ flagged_reason: string; flag_decision: string | null }>(
			`SELECT flagged_reason, flag_decision FROM runs WHERE id = $1`,
			[runId]
		);
		expect(run.flagged_reason).toMatch(/^Consent withdrawn on \d{4}-\d{2}-\d{2}$/);
		expect(run.flag_decision).toBeNull();
		// the withdraw link worked once
		expect((await post(`/consent/withdraw/${withdrawToken}`, {})).status).toBe(410);

		// the PI sees the flagged run and decides; a technician or researcher cannot
		const staff = await (await get(consentPath(p.id), app.cookies.piA)).text();
		expect(staff).toContain('data-testid="flagged-run"');
		expect(staff).toContain('reach-01.csv');
		expect((await post(`${consentPath(p.id)}?/decide`, { runId, decision: 'keep' }, app.cookies.technicianA)).status).toBe(403);
		expect((await post(`${consentPath(p.id)}?/decide`, { runId, decision: 'maybe' }, app.cookies.piA)).status).toBe(400);
		const decided = await post(
			`${consentPath(p.id)}?/decide`,
			{ runId, decision: 'exclude', note: 'Study rule 7.2: data of withdrawn participants are excluded.' },
			app.cookies.piA
		);
		expect(decided.status).toBe(303);
		expect((await one<{ flag_decision: string }>(`SELECT flag_decision FROM runs WHERE id = $1`, [runId])).flag_decision).toBe('exclude');
		expect((await post(`${consentPath(p.id)}?/decide`, { runId, decision: 'keep' }, app.cookies.piA)).status).toBe(409);
		const audit = await one<{ details: { decision: string; note: string } }>(
			`SELECT details FROM audit_events WHERE action = 'run.flag.decided' AND record_id = $1`,
			[runId]
		);
		expect(audit.details).toMatchObject({ decision: 'exclude', note: 'Study rule 7.2: data of withdrawn participants are excluded.' });

		// the history keeps every change, and cannot be rewritten
		const ev = (await app.sql.query(`SELECT from_state, to_state FROM consent_events WHERE participant_id = $1 ORDER BY id`, [p.id])).rows;
		expect(ev.map((e) => `${e.from_state}>${e.to_state}`)).toEqual(['not_invited>invited', 'invited>consented', 'consented>withdrawn']);
		await expect(app.sql.query(`UPDATE consent_events SET note = 'changed' WHERE participant_id = $1`, [p.id])).rejects.toThrow(
			/append-only/
		);
		const actions = (
			await app.sql.query(`SELECT action FROM audit_events WHERE record_id = $1 AND action LIKE 'consent.%' ORDER BY id`, [p.id])
		).rows.map((r) => r.action);
		// the second use of the withdraw link is the one refusal
		expect(actions).toEqual(['consent.invited', 'consent.given', 'consent.withdrawn', 'consent.withdraw-link.refused']);
	});

	it('researchers see the state and history but no name, e-mail address or typed signature', async () => {
		const withdrawn = (
			await app.sql.query(
				`SELECT p.id FROM participants p JOIN participant_personal pp ON pp.participant_id = p.id WHERE pp.email = 'withdrawer@example.org'`
			)
		).rows[0].id;
		for (const path of [consentPath(withdrawn), `${consentPath(withdrawn)}/__data.json`]) {
			const res = await fetch(app.base + path, { headers: { cookie: app.cookies.researcherA } });
			expect(res.status).toBe(200);
			const text = await res.text();
			expect(text).toContain('withdrawn');
			for (const secret of ['withdrawer@example.org', 'Wilhelmina', 'Consent Tester'])
				expect(text, `${path} leaks ${secret}`).not.toContain(secret);
		}
		// the decide buttons are the PI's
		expect(await (await get(consentPath(withdrawn), app.cookies.researcherA)).text()).not.toContain('?/decide');
	});
});
