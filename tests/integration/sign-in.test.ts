// Sign-in abuse cases against the built app: rate limits, single-use and expiring links, deactivated accounts.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import pg from 'pg';
import { startApp, signInAs, type AppUnderTest } from './app-under-test';
import { waitForMail } from './helpers';
import { LIMITS } from '../../src/lib/server/auth/rate-limit';

let app: AppUnderTest;
let sql: pg.Client;

beforeAll(async () => {
	app = await startApp('signin');
	sql = app.sql;
});
afterAll(async () => {
	await app?.close();
});

async function askLink(email: string) {
	const body = new URLSearchParams({ providerId: 'nodemailer', email, redirectTo: '/' });
	return fetch(`${app.base}/signin?/link`, {
		method: 'POST',
		body,
		redirect: 'manual',
		headers: { origin: app.base, accept: 'text/html', 'content-type': 'application/x-www-form-urlencoded' }
	});
}
const signedInName = async (cookie: string) => {
	const html = await (await fetch(`${app.base}/`, { headers: { cookie } })).text();
	return html.match(/data-testid="signed-in-as"[^>]*>([^<]*)</)?.[1] ?? null;
};

describe('password sign-in', () => {
	it('is rate-limited per account after repeated failures, with a clear message, and audited', async () => {
		const email = 'technician@alder-creek.example';
		for (let k = 0; k < LIMITS.perAccount; k++) {
			const r = await signInAs(app.base, email, 'wrong password ' + k);
			expect(r.cookie).toBe('');
			expect(r.location).toContain('code=credentials');
		}
		// now even the right password is refused until the window passes
		const blocked = await signInAs(app.base, email);
		expect(blocked.cookie).toBe('');
		expect(blocked.location).toContain('code=rate_limited');
		const page = await (await fetch(`${app.base}${blocked.location}`)).text();
		expect(page).toContain(`Too many failed sign-ins. Wait ${LIMITS.windowMinutes} minutes`);
		const { rows } = await sql.query(
			`SELECT outcome, details FROM audit_events WHERE actor_label = $1 AND action = 'auth.sign-in' ORDER BY id`,
			[email]
		);
		expect(rows.filter((r) => r.outcome === 'failed')).toHaveLength(LIMITS.perAccount);
		expect(rows.at(-1)).toMatchObject({ outcome: 'denied', details: { reason: 'rate limited' } });
	});

	it('records successful sign-ins with the client address', async () => {
		await signInAs(app.base, 'admin@alder-creek.example');
		const { rows } = await sql.query(
			`SELECT ip_address, details FROM audit_events WHERE action = 'auth.sign-in' AND outcome = 'ok' AND actor_label = 'admin@alder-creek.example' ORDER BY id DESC LIMIT 1`
		);
		expect(rows[0]).toMatchObject({ ip_address: '127.0.0.1', details: { method: 'password' } });
	});

	it('answers an unknown address exactly as a wrong password', async () => {
		const a = await signInAs(app.base, 'nobody@alder-creek.example', 'whatever-whatever');
		const b = await signInAs(app.base, 'researcher@alder-creek.example', 'whatever-whatever');
		expect(a.status).toBe(b.status);
		expect(a.location).toBe(b.location);
	});

	it('is refused for a deactivated account, whose open sessions stop working at once', async () => {
		const before = await signInAs(app.base, 'researcher@alder-creek.example');
		expect(await signedInName(before.cookie)).toBe('Mei Haraldsen');
		await sql.query(`UPDATE users SET deactivated_at = now() WHERE email = 'researcher@alder-creek.example'`);
		expect(await signedInName(before.cookie)).toBeNull();
		const after = await signInAs(app.base, 'researcher@alder-creek.example');
		expect(after.cookie).toBe('');
		await sql.query(`UPDATE users SET deactivated_at = NULL WHERE email = 'researcher@alder-creek.example'`);
	});
});

describe('e-mailed sign-in links', () => {
	it('work once', async () => {
		const r = await askLink('pi@alder-creek.example');
		expect([302, 303]).toContain(r.status);
		expect(r.headers.get('location')).toContain('/auth/verify-request');
		const mail = await waitForMail('pi@alder-creek.example', { base: app.base });
		const link = mail.text!.match(/https?:\/\/\S+/)![0];
		const first = await fetch(link, { redirect: 'manual' });
		expect(first.status).toBe(302);
		const cookie = first.headers
			.getSetCookie()
			.map((c) => c.split(';')[0])
			.filter((c) => c.includes('session-token'))
			.join('; ');
		expect(await signedInName(cookie)).toBe('Tomasz Okafor');
		const again = await fetch(link, { redirect: 'manual' });
		expect(again.headers.get('location')).toContain('error=Verification');
	});

	it('expire', async () => {
		await askLink('knee.researcher@alder-creek.example');
		const mail = await waitForMail('knee.researcher@alder-creek.example', { base: app.base });
		const link = mail.text!.match(/https?:\/\/\S+/)![0];
		await sql.query(
			`UPDATE verification_tokens SET expires = now() - interval '1 minute' WHERE identifier = 'knee.researcher@alder-creek.example'`
		);
		const res = await fetch(link, { redirect: 'manual' });
		expect(res.headers.get('location')).toContain('error=Verification');
		expect(res.headers.getSetCookie().some((c) => c.includes('session-token=') && !c.includes('session-token=;'))).toBe(false);
	});

	it('are not sent to unknown or deactivated addresses, and the answer looks the same', async () => {
		const known = await askLink('admin@alder-creek.example');
		const unknown = await askLink('stranger@alder-creek.example');
		expect(unknown.status).toBe(known.status);
		expect(unknown.headers.get('location')).toBe(known.headers.get('location'));
		const { rows } = await sql.query(
			`SELECT count(*)::int AS n FROM verification_tokens WHERE identifier = 'stranger@alder-creek.example'`
		);
		expect(rows[0].n).toBe(0);
		const audit = await sql.query(
			`SELECT outcome FROM audit_events WHERE action = 'auth.sign-in-link' AND actor_label = 'stranger@alder-creek.example'`
		);
		expect(audit.rows).toEqual([{ outcome: 'denied' }]);
	});
});

// Last in this file: it blocks every password sign-in from 127.0.0.1 for this app instance.
describe('per-address limit', () => {
	it('blocks an address that failed for many different accounts', async () => {
		const { rows } = await sql.query(
			`SELECT count(*)::int AS n FROM sign_in_failures WHERE ip_address = '127.0.0.1' AND occurred_at > now() - interval '15 minutes'`
		);
		for (let k = rows[0].n; k < LIMITS.perAddress; k++) {
			const r = await signInAs(app.base, `guess${k}@alder-creek.example`, 'wrong password');
			expect(r.location).toContain('code=credentials');
		}
		const blocked = await signInAs(app.base, 'admin@alder-creek.example');
		expect(blocked.cookie).toBe('');
		expect(blocked.location).toContain('code=rate_limited');
	});
});
