// The review workflow over HTTP: every step × every role, the signed approval (password and e-mailed code), the
// history and audit rows, and the e-mails to the PI and the submitter (read back from maildev).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD, PERSONAS, startApp, type AppUnderTest, type Persona } from './app-under-test';
import type { InboxMessage } from './helpers';
import { lockedMessage } from '../../src/lib/server/sessions/lock';
import { start, stop, type Child } from '../../src/cli/lib/proc';

let app: AppUnderTest;
type Step = 'submit' | 'approve' | 'return' | 'reopen' | 'code';
const ROLES: Persona[] = ['piA', 'researcherA', 'technicianA', 'memberB', 'anonymous'];

const pagePath = (sid = app.ids.sessionA) => `/studies/${app.ids.studyA}/sessions/${sid}`;

async function post(persona: Persona, step: Step, fields: Record<string, string> = {}, sid?: string) {
	const res = await fetch(`${app.base}${pagePath(sid)}?/${step}`, {
		method: 'POST',
		body: new URLSearchParams(fields),
		redirect: 'manual',
		headers: { cookie: app.cookies[persona], origin: app.base, accept: 'text/html', 'content-type': 'application/x-www-form-urlencoded' }
	});
	return { status: res.status, location: res.headers.get('location'), text: await res.text() };
}

const state = async (sid = app.ids.sessionA) =>
	(await app.sql.query<{ state: string }>(`SELECT state FROM sessions WHERE id = $1`, [sid])).rows[0].state;
const transitions = async (sid = app.ids.sessionA) =>
	(
		await app.sql.query(
			`SELECT from_state, to_state, note, signature_meaning, signature_method, actor_label FROM session_transitions WHERE session_id = $1 ORDER BY at, id`,
			[sid]
		)
	).rows;

/** The step went through (303): the session is now in `to`, and the last history row says so, with `row`'s fields. */
async function expectMoved(r: { status: number; text: string }, from: string, to: string, row: Record<string, unknown> = {}) {
	expect(r.status, r.text.slice(0, 300)).toBe(303);
	expect(await state()).toBe(to);
	expect((await transitions()).at(-1)).toMatchObject({ from_state: from, to_state: to, ...row });
}

/** How the history names a person: their name, else their e-mail. */
const labelOf = async (p: 'piA' | 'researcherA') =>
	(
		await app.sql.query<{ label: string }>(`SELECT coalesce(nullif(trim(name), ''), email) AS label FROM users WHERE email = $1`, [
			PERSONAS[p]
		])
	).rows[0].label;

const seen = new Set<string>();
/** The next message to `address` not read before whose subject matches, from maildev's inbox. */
async function nextMail(address: string, subject: RegExp, timeoutMs = 20_000): Promise<InboxMessage> {
	const deadline = Date.now() + timeoutMs;
	for (;;) {
		const all = (await (await fetch(`${process.env.MAILDEV_URL}/api/email`)).json()) as InboxMessage[];
		// other test files share maildev and the demo addresses: only this app's messages (their links carry its URL)
		const hit = all.find(
			(m) =>
				!seen.has(m.id) &&
				subject.test(m.subject) &&
				m.to?.some((t) => t.address.toLowerCase() === address) &&
				(m.text ?? '').includes(app.base)
		);
		if (hit) {
			seen.add(hit.id);
			return hit;
		}
		if (Date.now() > deadline) throw new Error(`no e-mail to ${address} matching ${subject} within ${timeoutMs} ms`);
		await new Promise((r) => setTimeout(r, 200));
	}
}

const NOTE = { note: 'Two reaches recorded, the second with the 2 kg box; nothing unusual.', confirm: 'yes' };
const COMMENT = { comment: 'Please add the second trial with the heavier box.', confirm: 'yes' };
const REASON = { reason: 'The segment table was the wrong one; rerun needed.', confirm: 'yes' };
const SIGN = { meaning: 'approved for analysis', password: DEMO_PASSWORD };

// the notifications go through the mail queue: the real worker sends them to maildev
let worker: Child | null = null;
beforeAll(async () => {
	app = await startApp('workflow');
	worker = start('worker', process.execPath, ['--import', 'tsx', 'src/cli/worker.ts'], {
		quiet: true,
		env: { ...process.env, DATABASE_URL: app.url }
	});
	const deadline = Date.now() + 30_000;
	while (!worker.tail.some((l) => l.includes('worker listening'))) {
		if (worker.proc.exitCode !== null || Date.now() > deadline) throw new Error(`worker not ready: ${worker.tail.join('\n')}`);
		await new Promise((r) => setTimeout(r, 100));
	}
});
afterAll(async () => {
	if (worker) await stop(worker);
	await app?.close();
});

/** What each persona gets for a step the session's state does not allow: 303 signed out, 404 outside, 403 by role, 409 else. */
async function refusedForAll(step: Step, allowed: Persona[], fields: Record<string, string>) {
	const got: Record<string, number> = {};
	for (const p of ROLES) got[p] = (await post(p, step, fields)).status;
	const want: Record<string, number> = {};
	for (const p of ROLES) want[p] = p === 'anonymous' ? 303 : p === 'memberB' ? 404 : allowed.includes(p) ? 409 : 403;
	expect(got).toEqual(want);
}

const FIELDS: Record<Step, Record<string, string>> = { submit: NOTE, approve: SIGN, return: COMMENT, reopen: REASON, code: {} };
const WHO: Record<Step, Persona[]> = { submit: ['piA', 'researcherA'], approve: ['piA'], return: ['piA'], reopen: ['piA'], code: ['piA'] };

describe('the review workflow', () => {
	it('draft: only submitting is possible, and only with a done run and a summary', async () => {
		expect(await state()).toBe('draft');
		for (const step of ['approve', 'return', 'reopen', 'code'] as const) await refusedForAll(step, WHO[step], FIELDS[step]);
		const refusedDraft = await post('piA', 'approve', SIGN);
		expect(refusedDraft.text).toContain('This session is draft');
		for (const p of ['technicianA', 'memberB', 'anonymous'] as Persona[])
			expect((await post(p, 'submit', NOTE)).status).toBe(p === 'technicianA' ? 403 : p === 'memberB' ? 404 : 303);
		// the summary is required (1–2000 characters once trimmed)
		expect((await post('researcherA', 'submit', { note: '   ', confirm: 'yes' })).status).toBe(400);
		expect((await post('researcherA', 'submit', { note: 'x'.repeat(2001), confirm: 'yes' })).status).toBe(400);
		expect((await post('researcherA', 'submit', { note: NOTE.note })).status).toBe(400);
		// a session without a done run cannot be submitted
		const empty = (
			await app.sql.query<{ id: string }>(
				`INSERT INTO sessions (study_id, participant_id, session_on, operator, task, setup) SELECT study_id, participant_id, session_on, operator, task, setup FROM sessions WHERE id = $1 RETURNING id`,
				[app.ids.sessionA]
			)
		).rows[0].id;
		const r = await post('researcherA', 'submit', NOTE, empty);
		expect(r.status).toBe(409);
		expect(r.text).toContain('no trial with a finished (done) run');
		expect(await state(empty)).toBe('draft');
		expect(await state()).toBe('draft');
	});

	it('submit: the researcher submits; the PI is e-mailed a link', async () => {
		const r = await post('researcherA', 'submit', NOTE);
		await expectMoved(r, 'draft', 'in_review', { note: NOTE.note, signature_meaning: null, actor_label: await labelOf('researcherA') });
		const mail = await nextMail(PERSONAS.piA, /For your approval/);
		expect(mail.text).toContain(`${app.base}${pagePath()}`);
		expect(mail.text).toContain('ALD-001');
		const audit = await app.sql.query(`SELECT details FROM audit_events WHERE action = 'session.submitted' AND record_id = $1`, [
			app.ids.sessionA
		]);
		expect(audit.rows).toHaveLength(1);
	});

	it('in review: submit and reopen are refused by state, the others by role', async () => {
		await refusedForAll('submit', WHO.submit, NOTE);
		await refusedForAll('reopen', WHO.reopen, REASON);
		for (const step of ['approve', 'return'] as const) {
			for (const p of ['researcherA', 'technicianA'] as Persona[]) expect((await post(p, step, FIELDS[step])).status).toBe(403);
			expect((await post('memberB', step, FIELDS[step])).status).toBe(404);
			expect((await post('anonymous', step, FIELDS[step])).status).toBe(303);
		}
		expect((await post('researcherA', 'submit', NOTE)).text).toContain('This session is in review');
		expect(await state()).toBe('in_review');
	});

	it('a return needs a comment; the submitter is e-mailed it with the link', async () => {
		expect((await post('piA', 'return', { confirm: 'yes' })).status).toBe(400);
		const r = await post('piA', 'return', COMMENT);
		expect(r.status).toBe(303);
		expect(await state()).toBe('returned');
		const mail = await nextMail(PERSONAS.researcherA, /Returned with a comment/);
		expect(mail.text).toContain(COMMENT.comment);
		expect(mail.text).toContain(`${app.base}${pagePath()}`);
	});

	it('returned: only submitting again is possible', async () => {
		for (const step of ['approve', 'return', 'reopen', 'code'] as const) await refusedForAll(step, WHO[step], FIELDS[step]);
		expect((await post('researcherA', 'submit', NOTE)).status).toBe(303);
		expect(await state()).toBe('in_review');
		await nextMail(PERSONAS.piA, /For your approval/);
	});

	it('a wrong password changes nothing and is audited; the right one signs with the meaning', async () => {
		const before = (await transitions()).length;
		const wrong = await post('piA', 'approve', { ...SIGN, password: 'not the password at all' });
		expect(wrong.status).toBe(400);
		expect(wrong.text).toContain('That is not your password');
		expect(await state()).toBe('in_review');
		expect(await transitions()).toHaveLength(before);
		const failed = await app.sql.query(
			`SELECT outcome, details FROM audit_events WHERE action = 'session.signature-failed' AND record_id = $1`,
			[app.ids.sessionA]
		);
		expect(failed.rows).toHaveLength(1);
		expect(failed.rows[0]).toMatchObject({ outcome: 'failed', details: { method: 'password' } });
		// the meaning must be ticked
		expect((await post('piA', 'approve', { password: DEMO_PASSWORD })).status).toBe(400);
		expect(await state()).toBe('in_review');

		const ok = await post('piA', 'approve', SIGN);
		await expectMoved(ok, 'in_review', 'approved', {
			signature_meaning: 'approved for analysis',
			signature_method: 'password',
			actor_label: await labelOf('piA')
		});
		const mail = await nextMail(PERSONAS.researcherA, /^Approved/);
		expect(mail.text).toContain('approved for analysis');
		expect(mail.text).toContain(`${app.base}${pagePath()}`);
		// the page shows the lock and the signed history
		const page = await fetch(app.base + pagePath(), { headers: { cookie: app.cookies.researcherA } });
		const html = await page.text();
		expect(html).toContain('data-testid="locked-banner"');
		expect(html).toContain('signed as “approved for analysis”');
	});

	it('approved: every step but the PI’s reopen is refused with the lock; a reopen needs a reason', async () => {
		for (const step of ['submit', 'approve', 'return', 'code'] as const) await refusedForAll(step, WHO[step], FIELDS[step]);
		const locked = await post('researcherA', 'submit', NOTE);
		expect(locked.text).toContain(lockedMessage);
		for (const p of ['researcherA', 'technicianA'] as Persona[]) expect((await post(p, 'reopen', REASON)).status).toBe(403);
		expect((await post('piA', 'reopen', { confirm: 'yes' })).status).toBe(400);
		expect(await state()).toBe('approved');
		const r = await post('piA', 'reopen', REASON);
		await expectMoved(r, 'approved', 'returned', { note: REASON.reason });
	});
});

describe('signing with an e-mailed code (an account without a password)', () => {
	let savedHash: string;
	beforeAll(async () => {
		savedHash = (await app.sql.query<{ password_hash: string }>(`SELECT password_hash FROM users WHERE email = $1`, [PERSONAS.piA])).rows[0]
			.password_hash;
		await app.sql.query(`UPDATE users SET password_hash = NULL WHERE email = $1`, [PERSONAS.piA]);
		if ((await state()) !== 'in_review') expect((await post('researcherA', 'submit', NOTE)).status).toBe(303);
	});
	afterAll(async () => {
		await app.sql.query(`UPDATE users SET password_hash = $2 WHERE email = $1`, [PERSONAS.piA, savedHash]);
	});
	const codeFrom = (m: InboxMessage) => m.text?.match(/\b(\d{6})\b/)?.[1] ?? '';

	it('a code arrives by e-mail; a wrong one is refused and audited, the right one signs once', async () => {
		expect((await post('piA', 'approve', { meaning: SIGN.meaning })).status).toBe(400);
		const asked = await post('piA', 'code');
		expect(asked.status).toBe(200);
		const code = codeFrom(await nextMail(PERSONAS.piA, /Your code to sign/));
		expect(code).toMatch(/^\d{6}$/);
		// only its hash is stored
		const stored = await app.sql.query(`SELECT code_hash FROM signature_codes WHERE session_id = $1`, [app.ids.sessionA]);
		expect(stored.rows.every((r) => !String(r.code_hash).includes(code))).toBe(true);

		const wrongCode = code === '000000' ? '000001' : '000000';
		const wrong = await post('piA', 'approve', { meaning: SIGN.meaning, code: wrongCode });
		expect(wrong.status).toBe(400);
		expect(await state()).toBe('in_review');
		expect(
			(await app.sql.query(`SELECT 1 FROM audit_events WHERE action = 'session.signature-failed' AND details->>'method' = 'email_code'`))
				.rows.length
		).toBe(1);

		const ok = await post('piA', 'approve', { meaning: SIGN.meaning, code });
		expect(ok.status, ok.text.slice(0, 300)).toBe(303);
		expect(await state()).toBe('approved');
		expect((await transitions()).at(-1)).toMatchObject({
			to_state: 'approved',
			signature_method: 'email_code',
			signature_meaning: 'approved for analysis'
		});

		// the used code does not sign the next approval
		expect((await post('piA', 'reopen', REASON)).status).toBe(303);
		expect((await post('researcherA', 'submit', NOTE)).status).toBe(303);
		const reused = await post('piA', 'approve', { meaning: SIGN.meaning, code });
		expect(reused.status).toBe(400);
		expect(reused.text).toContain('used or has expired');
		expect(await state()).toBe('in_review');
	});

	it('an expired code is refused', async () => {
		expect((await post('piA', 'code')).status).toBe(200);
		const code = codeFrom(await nextMail(PERSONAS.piA, /Your code to sign/));
		await app.sql.query(`UPDATE signature_codes SET expires_at = now() - interval '1 minute' WHERE session_id = $1 AND used_at IS NULL`, [
			app.ids.sessionA
		]);
		const r = await post('piA', 'approve', { meaning: SIGN.meaning, code });
		expect(r.status).toBe(400);
		expect(r.text).toContain('used or has expired');
		expect(await state()).toBe('in_review');
	});
});

describe('work queues', () => {
	it('the PI sees the session awaiting approval on the home page, with a count in the navigation', async () => {
		expect(await state()).toBe('in_review');
		const html = await (await fetch(app.base + '/', { headers: { cookie: app.cookies.piA } })).text();
		expect(html).toContain('Awaiting your approval');
		expect(html).toContain(pagePath());
		expect(html).toMatch(/items waiting:\s*<\/span>\s*[1-9]/);
		const researcher = await (await fetch(app.base + '/', { headers: { cookie: app.cookies.researcherA } })).text();
		expect(researcher).toContain('No session was returned');
	});
});
