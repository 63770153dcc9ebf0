// People: single-use tokens, the people list and changes (direct calls on real PostgreSQL), then invitations,
// password resets and deactivation over HTTP against the built app, with the e-mails read from maildev.
import { type RequestContext } from '../../src/lib/server/access/context';
import { FormProblem } from '../../src/lib/server/errors';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHash, randomBytes } from 'node:crypto';
import pg from 'pg';
import type { Sequelize } from 'sequelize';
import { db, closeDb } from '../../src/lib/server/db/index';
import { migrateUp } from '../../src/lib/server/db/migrate';
import { AuditEvent, OneTimeToken, Study, StudyMember, User } from '../../src/lib/server/db/models';
import { loadActor, type Actor } from '../../src/lib/server/access/guard';
import { closeMail } from '../../src/lib/server/mail/index';
import { consume, hashToken, inspectToken, issueToken } from '../../src/lib/server/auth/tokens';
import {
	deactivatePerson,
	invitePerson,
	listPeople,
	parsePeopleQuery,
	reactivatePerson,
	requestPasswordReset,
	setLabAdmin,
	setStudyRole
} from '../../src/lib/server/people/manage';
import { loadDemoSeed } from '../../seeds/index';
import { freshDatabase } from './helpers';
import { DEMO_PASSWORD, PERSONAS, signInAs, startApp, type AppUnderTest } from './app-under-test';

const ctx: RequestContext = { ipAddress: '127.0.0.1', origin: 'http://people.test', method: 'TEST', path: '/people' };

interface Mail {
	subject: string;
	to: { address: string }[];
	text: string;
	time: string;
}

/** Polls maildev for a message to `address` that arrived after `since` and whose subject matches. */
async function mailSince(address: string, since: number, subject: RegExp, timeoutMs = 20_000): Promise<Mail | null> {
	const deadline = Date.now() + timeoutMs;
	for (;;) {
		const all = (await (await fetch(`${process.env.MAILDEV_URL}/api/email`)).json()) as Mail[];
		const hit = all.find(
			(m) => m.to.some((t) => t.address === address) && new Date(m.time).getTime() >= since - 1000 && subject.test(m.subject)
		);
		if (hit) return hit;
		if (Date.now() > deadline) return null;
		await new Promise((r) => setTimeout(r, 200));
	}
}

const linkIn = (mail: Mail, path: string) => mail.text.match(new RegExp(`https?://\\S+/${path}/[A-Za-z0-9_-]{43}`))?.[0] ?? null;

describe('direct calls on a fresh database', () => {
	let sequelize: Sequelize;
	let drop: () => Promise<void>;
	let admin: Actor;
	let userId: string;

	beforeAll(async () => {
		const fresh = await freshDatabase('people');
		drop = fresh.drop;
		sequelize = db(fresh.url);
		await migrateUp(sequelize);
		await loadDemoSeed(sequelize);
		const a = await User.findOne({ where: { email: PERSONAS.admin } });
		admin = (await loadActor(a!.id, a!.sessionVersion))!;
		userId = (await User.findOne({ where: { email: PERSONAS.technicianA } }))!.id;
	});
	afterAll(async () => {
		closeMail();
		await closeDb();
		await drop();
	});

	describe('one-time tokens', () => {
		it('stores only the SHA-256 hash of a 32-byte base64url token', async () => {
			const token = await issueToken('invitation', userId);
			expect(token).toMatch(/^[A-Za-z0-9_-]{43}$/);
			expect(Buffer.from(token, 'base64url')).toHaveLength(32);
			const [rows] = (await sequelize.query(`SELECT * FROM one_time_tokens`)) as [Record<string, unknown>[], unknown];
			expect(JSON.stringify(rows)).not.toContain(token);
			// the hash is recomputed here with node:crypto independently of tokens.ts
			const expected = createHash('sha256').update(token).digest('hex');
			expect(hashToken(token)).toBe(expected);
			const row = await OneTimeToken.findOne({ where: { tokenHash: expected } });
			expect(row?.purpose).toBe('invitation');
			expect(row?.userId).toBe(userId);
			// invitations last 7 days
			expect(row!.expiresAt.getTime() - row!.createdAt.getTime()).toBeGreaterThan(7 * 86_400_000 - 60_000);
			expect(row!.expiresAt.getTime() - row!.createdAt.getTime()).toBeLessThan(7 * 86_400_000 + 60_000);
		});

		it('password-reset tokens last one hour', async () => {
			const token = await issueToken('password-reset', userId);
			const row = await OneTimeToken.findOne({ where: { tokenHash: hashToken(token) } });
			expect(Math.abs(row!.expiresAt.getTime() - Date.now() - 3600_000)).toBeLessThan(60_000);
		});

		it('works once: a reused token is refused as used', async () => {
			const token = await issueToken('invitation', userId);
			const first = await consume('invitation', token);
			expect(first).toMatchObject({ ok: true, userId });
			expect(await consume('invitation', token)).toEqual({ ok: false, reason: 'used' });
			expect((await OneTimeToken.findOne({ where: { tokenHash: hashToken(token) } }))?.usedAt).toBeInstanceOf(Date);
		});

		it('refuses an expired token', async () => {
			const token = await issueToken('password-reset', userId);
			await OneTimeToken.update({ expiresAt: new Date(Date.now() - 1000) }, { where: { tokenHash: hashToken(token) } });
			expect(await inspectToken('password-reset', token)).toEqual({ ok: false, reason: 'expired' });
			expect(await consume('password-reset', token)).toEqual({ ok: false, reason: 'expired' });
		});

		it('refuses a token used for the wrong purpose, which stays usable for its own', async () => {
			const token = await issueToken('invitation', userId);
			expect(await consume('password-reset', token)).toEqual({ ok: false, reason: 'wrong-purpose' });
			expect((await consume('invitation', token)).ok).toBe(true);
		});

		it('refuses unknown and malformed tokens', async () => {
			expect(await consume('invitation', randomBytes(32).toString('base64url'))).toEqual({ ok: false, reason: 'unknown' });
			expect(await consume('invitation', 'not a token')).toEqual({ ok: false, reason: 'unknown' });
			expect(await consume('invitation', '')).toEqual({ ok: false, reason: 'unknown' });
		});

		it('a newer link of the same purpose replaces the older one', async () => {
			const older = await issueToken('password-reset', userId);
			const newer = await issueToken('password-reset', userId);
			expect(await consume('password-reset', older)).toEqual({ ok: false, reason: 'expired' });
			expect((await consume('password-reset', newer)).ok).toBe(true);
		});

		it('is not spent when the change it authorises rolls back', async () => {
			const token = await issueToken('invitation', userId);
			await expect(
				sequelize.transaction(async (t) => {
					expect((await consume('invitation', token, t)).ok).toBe(true);
					throw new Error('the change failed');
				})
			).rejects.toThrow('the change failed');
			expect((await consume('invitation', token)).ok).toBe(true);
		});

		it('two simultaneous uses: exactly one succeeds', async () => {
			const token = await issueToken('invitation', userId);
			const results = await Promise.all([consume('invitation', token), consume('invitation', token), consume('invitation', token)]);
			expect(results.filter((r) => r.ok)).toHaveLength(1);
			expect(results.filter((r) => !r.ok && r.reason === 'used')).toHaveLength(2);
		});
	});

	describe('the people list', () => {
		beforeAll(async () => {
			// 60 people named "Search Person 01" … "60", created one minute apart so "created" has a clear order
			const base = Date.UTC(2026, 0, 1);
			await User.bulkCreate(
				Array.from({ length: 60 }, (_, i) => {
					const n = String(i + 1).padStart(2, '0');
					return {
						email: `listed-${String(60 - i).padStart(2, '0')}@list.example`,
						name: `Search Person ${n}`,
						emailVerified: null,
						createdAt: new Date(base + i * 60_000)
					};
				})
			);
		});
		const q = (s: string) => parsePeopleQuery(new URLSearchParams(s));

		it('finds by name or e-mail in any case, 25 to a page', async () => {
			const p1 = await listPeople(admin, q('q=sEaRcH pErSoN'));
			expect(p1.total).toBe(60);
			expect(p1.pageCount).toBe(3);
			expect(p1.people).toHaveLength(25);
			expect(p1.people.map((p) => p.name)).toEqual(Array.from({ length: 25 }, (_, i) => `Search Person ${String(i + 1).padStart(2, '0')}`));
			const p3 = await listPeople(admin, q('q=search person&page=3'));
			expect(p3.people.map((p) => p.name)).toEqual(
				Array.from({ length: 10 }, (_, i) => `Search Person ${String(i + 51).padStart(2, '0')}`)
			);
			const byMail = await listPeople(admin, q('q=LIST.EXAMPLE'));
			expect(byMail.total).toBe(60);
			const one = await listPeople(admin, q('q=person 07'));
			expect(one.people.map((p) => p.email)).toEqual(['listed-54@list.example']);
		});

		it('treats % and _ in the search as plain characters', async () => {
			expect((await listPeople(admin, q('q=%25'))).total).toBe(0);
			expect((await listPeople(admin, q('q=_'))).total).toBe(0);
		});

		it('sorts by name, e-mail or date added, either way', async () => {
			const nameDesc = await listPeople(admin, q('q=list.example&sort=name&dir=desc'));
			expect(nameDesc.people[0].name).toBe('Search Person 60');
			const email = await listPeople(admin, q('q=list.example&sort=email'));
			expect(email.people.slice(0, 3).map((p) => p.email)).toEqual([
				'listed-01@list.example',
				'listed-02@list.example',
				'listed-03@list.example'
			]);
			const emailDesc = await listPeople(admin, q('q=list.example&sort=email&dir=desc&page=3'));
			expect(emailDesc.people.at(-1)?.email).toBe('listed-01@list.example');
			const created = await listPeople(admin, q('q=list.example&sort=created&dir=desc'));
			expect(created.people[0].name).toBe('Search Person 60');
			const createdAsc = await listPeople(admin, q('q=list.example&sort=created&page=2'));
			expect(createdAsc.people[0].name).toBe('Search Person 26');
		});

		it('falls back to defaults for unknown parameters and clamps the page', async () => {
			expect(q('sort=password&dir=sideways&page=-3')).toEqual({ q: '', sort: 'name', dir: 'asc', page: 1 });
			const beyond = await listPeople(admin, q('q=list.example&page=99'));
			expect(beyond.query.page).toBe(3);
			expect(beyond.people).toHaveLength(10);
		});

		it('shows each person’s study roles and status', async () => {
			const page = await listPeople(admin, q('q=okafor'));
			expect(page.people).toHaveLength(1);
			expect(page.people[0].roles.map((r) => `${r.code}: ${r.role}`)).toEqual(['KNEE-60: pi', 'SHELF-REACH: pi', 'WALK-3: pi']);
			expect(page.people[0].deactivatedAt).toBeNull();
			expect((await listPeople(admin, q('q=nobody-has-this-name'))).people).toEqual([]);
		});

		it('refuses someone who is not a lab administrator', async () => {
			const pi = await User.findOne({ where: { email: PERSONAS.piA } });
			const piActor = (await loadActor(pi!.id, pi!.sessionVersion))!;
			await expect(listPeople(piActor, q(''))).rejects.toBeInstanceOf(FormProblem);
		});
	});

	describe('changes by an administrator', () => {
		it('changes, adds and removes a study role, auditing before and after', async () => {
			const study = (await Study.findOne({ where: { code: 'KNEE-60' } }))!;
			expect(await setStudyRole(admin, ctx, userId, study.id, 'technician')).toBe(true);
			expect(await setStudyRole(admin, ctx, userId, study.id, 'technician')).toBe(false);
			expect(await setStudyRole(admin, ctx, userId, study.id, 'researcher')).toBe(true);
			expect(await setStudyRole(admin, ctx, userId, study.id, null)).toBe(true);
			expect(await StudyMember.findOne({ where: { userId, studyId: study.id } })).toBeNull();
			const events = await AuditEvent.findAll({ where: { action: 'people.role-changed', recordId: userId }, order: [['id', 'ASC']] });
			expect(events.map((e) => [e.details.before, e.details.after])).toEqual([
				[null, 'technician'],
				['technician', 'researcher'],
				['researcher', null]
			]);
			expect(events.every((e) => e.studyId === study.id && e.actorUserId === admin.id)).toBe(true);
		});

		it('toggles the lab administrator flag, but not one’s own', async () => {
			expect(await setLabAdmin(admin, ctx, userId, true)).toBe(true);
			expect(await setLabAdmin(admin, ctx, userId, false)).toBe(true);
			await expect(setLabAdmin(admin, ctx, admin.id, false)).rejects.toThrow(/cannot remove your own/);
			expect((await User.findByPk(admin.id))?.isAdmin).toBe(true);
			const events = await AuditEvent.findAll({ where: { action: 'people.admin-changed', recordId: userId }, order: [['id', 'ASC']] });
			expect(events.map((e) => e.details.after)).toEqual([true, false]);
		});

		it('deactivates (ending sessions) and reactivates, never oneself', async () => {
			const before = (await User.findByPk(userId))!;
			await deactivatePerson(admin, ctx, userId);
			const after = (await User.findByPk(userId))!;
			expect(after.deactivatedAt).toBeInstanceOf(Date);
			expect(after.sessionVersion).toBe(before.sessionVersion + 1);
			expect(await loadActor(userId, before.sessionVersion)).toBeNull();
			await expect(deactivatePerson(admin, ctx, userId)).rejects.toThrow(/already deactivated/);
			await expect(deactivatePerson(admin, ctx, admin.id)).rejects.toThrow(/cannot deactivate your own/);
			// records stay: the roles are still there
			expect(await StudyMember.count({ where: { userId } })).toBeGreaterThan(0);
			await reactivatePerson(admin, ctx, userId);
			expect((await User.findByPk(userId))?.deactivatedAt).toBeNull();
			expect(await AuditEvent.count({ where: { action: 'people.deactivated', recordId: userId } })).toBe(1);
			expect(await AuditEvent.count({ where: { action: 'people.reactivated', recordId: userId } })).toBe(1);
		});

		it('a refused change leaves no audit row behind', async () => {
			const count = await AuditEvent.count();
			await expect(
				setStudyRole(admin, ctx, '00000000-0000-4000-8000-000000000000', (await Study.findOne())!.id, 'pi')
			).rejects.toMatchObject({ kind: 'not-found' });
			expect(await AuditEvent.count()).toBe(count);
		});

		it('inviting an address that has an account adds roles without a duplicate', async () => {
			const study = (await Study.findOne({ where: { code: 'KNEE-60' } }))!;
			const since = Date.now();
			const first = await invitePerson(admin, ctx, { email: 'twice@people.example', name: 'Twice Invited', roles: new Map() });
			const second = await invitePerson(admin, ctx, {
				email: 'twice@people.example',
				name: null,
				roles: new Map([[study.id, 'technician']])
			});
			expect(first.created).toBe(true);
			expect(second).toEqual({ userId: first.userId, created: false });
			expect(await User.count({ where: { email: 'twice@people.example' } })).toBe(1);
			expect((await StudyMember.findOne({ where: { userId: first.userId, studyId: study.id } }))?.role).toBe('technician');
			expect(await AuditEvent.count({ where: { action: 'people.invited', recordId: first.userId } })).toBe(2);
			const mail = await mailSince('twice@people.example', since, /invited/);
			expect(linkIn(mail!, 'invitation')).toMatch(/^http:\/\/people\.test\/invitation\//);
		});

		it('sends no reset link to unknown or deactivated accounts', async () => {
			const gone = await User.create({ email: 'gone@people.example', name: 'Gone Person', emailVerified: null, deactivatedAt: new Date() });
			const tokens = await OneTimeToken.count({ where: { purpose: 'password-reset' } });
			await requestPasswordReset(ctx, 'nobody@people.example');
			await requestPasswordReset(ctx, 'GONE@people.example');
			expect(await OneTimeToken.count({ where: { purpose: 'password-reset' } })).toBe(tokens);
			const denied = await AuditEvent.findAll({ where: { action: 'auth.password-reset-requested', outcome: 'denied' } });
			expect(denied.map((e) => e.details.reason).sort()).toEqual(['deactivated', 'no such account']);
			expect(denied.find((e) => e.details.reason === 'deactivated')?.actorUserId).toBe(gone.id);
		});

		it('sends at most three reset links an hour to one account', async () => {
			const since = Date.now();
			const p = await User.create({ email: 'often@people.example', name: 'Often Forgets', emailVerified: null });
			for (let i = 0; i < 5; i++) await requestPasswordReset(ctx, p.email);
			expect(await OneTimeToken.count({ where: { userId: p.id, purpose: 'password-reset' } })).toBe(3);
			expect(await mailSince(p.email, since, /Reset/)).not.toBeNull();
		});
	});
});

describe('over HTTP against the built app', () => {
	let app: AppUnderTest;
	let client: pg.Client;
	let studyA: string;

	const post = (path: string, fields: Record<string, string>, cookie = '') =>
		fetch(app.base + path, {
			method: 'POST',
			redirect: 'manual',
			headers: { origin: app.base, cookie, accept: 'text/html', 'content-type': 'application/x-www-form-urlencoded' },
			body: new URLSearchParams(fields)
		});
	const get = (path: string, cookie = '') => fetch(app.base + path, { redirect: 'manual', headers: { cookie } });
	const signedInName = async (cookie: string) => {
		const html = await (await get('/', cookie)).text();
		return html.match(/data-testid="signed-in-as"[^>]*>([^<]*)</)?.[1] ?? null;
	};
	const idOf = async (email: string) => (await client.query(`SELECT id FROM users WHERE email = $1`, [email])).rows[0]?.id as string;

	beforeAll(async () => {
		app = await startApp('people_http');
		client = app.sql;
		studyA = app.ids.studyA;
	});
	afterAll(async () => {
		await app?.close();
	});

	it('an invitation e-mail arrives; its link sets a password that then signs in, and works only once', async () => {
		const email = `invitee-${randomBytes(3).toString('hex')}@people.example`;
		const since = Date.now();
		const invited = await post(
			'/people/invite',
			{ email: ` ${email.toUpperCase()} `, name: '', [`role-${studyA}`]: 'researcher' },
			app.cookies.admin
		);
		expect(invited.status).toBe(303);
		const id = await idOf(email);
		expect(invited.headers.get('location')).toBe(`/people/${id}?done=invited`);
		const row = (await client.query(`SELECT password_hash, email_verified FROM users WHERE id = $1`, [id])).rows[0];
		expect(row).toEqual({ password_hash: null, email_verified: null });
		expect((await client.query(`SELECT role FROM study_members WHERE user_id = $1`, [id])).rows).toEqual([{ role: 'researcher' }]);

		const mail = await mailSince(email, since, /invited/);
		expect(mail?.text).toContain('SHELF-REACH: researcher');
		const link = linkIn(mail!, 'invitation')!;
		expect(new URL(link).origin).toBe(app.base);
		const path = new URL(link).pathname;

		const page = await (await get(path)).text();
		expect(page).toContain(email);
		// precise field messages, and the link is not spent by a form that was refused
		const short = await post(path, { name: '', password: 'short', passwordAgain: 'short' });
		expect(short.status).toBe(400);
		const shortPage = await short.text();
		expect(shortPage).toContain('Enter your name');
		expect(shortPage).toContain('at least 12 characters');
		const differ = await post(path, { name: 'Ines Varga', password: 'lichen fjord amber', passwordAgain: 'lichen fjord ambr' });
		expect(await differ.text()).toContain('The two passwords differ');

		const accepted = await post(path, { name: 'Ines Varga', password: 'lichen fjord amber', passwordAgain: 'lichen fjord amber' });
		expect(accepted.status).toBe(303);
		expect(accepted.headers.get('location')).toBe('/signin?done=invitation-password');
		const after = (await client.query(`SELECT name, password_hash, email_verified FROM users WHERE id = $1`, [id])).rows[0];
		expect(after.name).toBe('Ines Varga');
		expect(after.password_hash).toMatch(/^\$argon2id\$/);
		expect(after.email_verified).toBeInstanceOf(Date);
		expect(
			(
				await client.query(`SELECT count(*)::int AS n FROM audit_events WHERE action = 'people.invitation-accepted' AND record_id = $1`, [
					id
				])
			).rows[0].n
		).toBe(1);

		const signedIn = await signInAs(app.base, email, 'lichen fjord amber');
		expect(signedIn.cookie).not.toBe('');
		expect(await signedInName(signedIn.cookie)).toBe('Ines Varga');

		// the same link again: refused, and the page says so calmly
		const again = await post(path, { name: 'Someone Else', password: 'another long password', passwordAgain: 'another long password' });
		expect(again.status).toBe(410);
		expect(await (await get(path)).text()).toContain('This link has expired or has already been used');
		expect((await client.query(`SELECT name FROM users WHERE id = $1`, [id])).rows[0].name).toBe('Ines Varga');
	});

	it('a password reset sets the new password and signs older sessions out', async () => {
		const email = PERSONAS.technicianA;
		const oldCookie = app.cookies.technicianA;
		expect(await signedInName(oldCookie)).toBe('Jonah Abernethy');

		// an unknown address gets the very same answer
		const unknown = await post('/signin/forgot', { email: 'stranger@people.example' });
		const since = Date.now();
		const asked = await post('/signin/forgot', { email });
		expect(asked.status).toBe(200);
		expect(unknown.status).toBe(200);
		const strip = (html: string) => html.replace(/value="[^"]*"/g, '');
		expect(strip(await asked.text())).toContain('If an account can sign in with that address, a reset link is on its way');
		expect(strip(await unknown.text())).toContain('If an account can sign in with that address, a reset link is on its way');
		const bad = await post('/signin/forgot', { email: 'no-at-sign' });
		expect(bad.status).toBe(400);
		expect(await bad.text()).toContain('is not an e-mail address');

		const mail = await mailSince(email, since, /Reset/);
		const path = new URL(linkIn(mail!, 'reset-password')!).pathname;
		expect(await (await get(path)).text()).toContain('Choose a new password');
		const done = await post(path, { password: 'a brand new passphrase', passwordAgain: 'a brand new passphrase' });
		expect(done.status).toBe(303);
		expect(done.headers.get('location')).toBe('/signin?done=password-reset');

		expect(await signedInName(oldCookie)).toBeNull();
		expect((await signInAs(app.base, email, DEMO_PASSWORD)).cookie).toBe('');
		const fresh = await signInAs(app.base, email, 'a brand new passphrase');
		expect(fresh.cookie).not.toBe('');
		expect(await signedInName(fresh.cookie)).toBe('Jonah Abernethy');
		expect((await post(path, { password: 'yet another passphrase', passwordAgain: 'yet another passphrase' })).status).toBe(410);
		const audit = await client.query(
			`SELECT count(*)::int AS n FROM audit_events WHERE action = 'auth.password-reset' AND outcome = 'ok' AND actor_user_id = $1`,
			[await idOf(email)]
		);
		expect(audit.rows[0].n).toBe(1);
		expect(await mailSince('stranger@people.example', since - 5000, /Reset/, 1000)).toBeNull();
	});

	it('a deactivated account cannot sign in and its open session stops working', async () => {
		const email = PERSONAS.researcherA;
		const id = await idOf(email);
		const cookie = app.cookies.researcherA;
		expect(await signedInName(cookie)).toBe('Mei Haraldsen');

		const page = await (await get(`/people/${id}?confirm=deactivate`, app.cookies.admin)).text();
		expect(page).toContain('Deactivate Mei Haraldsen?');
		// without the confirmation field nothing happens
		expect((await post(`/people/${id}?/deactivate`, {}, app.cookies.admin)).status).toBe(400);
		expect(await signedInName(cookie)).toBe('Mei Haraldsen');

		const res = await post(`/people/${id}?/deactivate`, { confirm: 'yes' }, app.cookies.admin);
		expect(res.status).toBe(303);
		expect(res.headers.get('location')).toBe(`/people/${id}?done=deactivated`);
		expect(await signedInName(cookie)).toBeNull();
		expect((await signInAs(app.base, email)).cookie).toBe('');
		// records and roles stay
		expect((await client.query(`SELECT count(*)::int AS n FROM study_members WHERE user_id = $1`, [id])).rows[0].n).toBe(1);

		const list = await (await get('/people?q=haraldsen', app.cookies.admin)).text();
		expect(list).toContain('Deactivated');

		expect((await post(`/people/${id}?/reactivate`, { confirm: 'yes' }, app.cookies.admin)).status).toBe(303);
		expect((await signInAs(app.base, email)).cookie).not.toBe('');
	});

	it('an administrator cannot deactivate themselves or drop their own administrator role', async () => {
		const id = await idOf(PERSONAS.admin);
		const self = await post(`/people/${id}?/deactivate`, { confirm: 'yes' }, app.cookies.admin);
		expect(self.status).toBe(409);
		expect(await self.text()).toContain('You cannot deactivate your own account');
		const flag = await post(`/people/${id}?/admin`, { isAdmin: 'no' }, app.cookies.admin);
		expect(flag.status).toBe(409);
		expect(await signedInName(app.cookies.admin)).toBe('Rosa Lindqvist');
	});

	it('changes a study role from the person page and lists it as CODE: role', async () => {
		const id = await idOf(PERSONAS.memberB);
		const res = await post(`/people/${id}?/role`, { studyId: studyA, role: 'technician' }, app.cookies.admin);
		expect(res.status).toBe(200);
		expect(await res.text()).toContain('SHELF-REACH: now technician');
		const list = await (await get('/people?q=castellano', app.cookies.admin)).text();
		expect(list.replace(/<!--.*?-->/g, '').replace(/<[^>]+>/g, '')).toMatch(/KNEE-60: researcher[\s\S]*SHELF-REACH: technician/);
		const wrong = await post(`/people/${id}?/role`, { studyId: studyA, role: 'owner' }, app.cookies.admin);
		expect(wrong.status).toBe(400);
		expect(await wrong.text()).toContain('Choose a role for SHELF-REACH from the list');
		expect((await get(`/people/00000000-0000-4000-8000-000000000000`, app.cookies.admin)).status).toBe(404);
	});
});
