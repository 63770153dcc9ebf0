// An approved session is locked: every mutating handler of the route tree is either refused on it (409 with the
// lock's message, nothing changed) or listed as exempt with its reason. A new route without an entry fails here.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { LOCK_MATRIX, type LockEntry } from './lock-matrix';
import { startApp, type AppUnderTest } from './app-under-test';
import { routeTree } from './route-tree';
import { lockedMessage } from '../../src/lib/server/sessions/lock';

const key = (route: string, method: string, action?: string) => `${method} ${route}${action ? ` ?/${action}` : ''}`;

describe('the lock matrix covers every mutating handler', () => {
	const handlers = routeTree().flatMap((r) => [
		...r.actions.map((a) => key(r.route, 'POST', a)),
		...r.methods.filter((m) => m !== 'GET').map((m) => key(r.route, m))
	]);
	const listed = new Set(LOCK_MATRIX.map((e) => key(e.route, e.method, e.action)));
	for (const h of handlers) it(`${h} has an entry`, () => expect(listed.has(h)).toBe(true));
	it('lists no handler that does not exist, and each entry either refuses or gives a reason', () => {
		expect([...listed].filter((k) => !handlers.includes(k))).toEqual([]);
		for (const e of LOCK_MATRIX) expect(Boolean(e.refuses) !== Boolean(e.exempt), key(e.route, e.method, e.action)).toBe(true);
	});
});

describe('an approved session refuses every change', () => {
	let app: AppUnderTest;
	const counts = async () =>
		(
			await app.sql.query(
				`SELECT (SELECT count(*) FROM trials WHERE session_id = $1)::int AS trials, (SELECT count(*) FROM raw_uploads)::int AS uploads,
				        (SELECT count(*) FROM runs r JOIN trials t ON t.id = r.trial_id WHERE t.session_id = $1)::int AS runs,
				        (SELECT row_to_json(s)::text FROM sessions s WHERE s.id = $1) AS session`,
				[app.ids.sessionA]
			)
		).rows[0];
	let before: Awaited<ReturnType<typeof counts>>;
	beforeAll(async () => {
		app = await startApp('lock');
		// a failed run, so that a retry is refused for the lock and not because the run is done
		await app.sql.query(`UPDATE runs SET state = 'failed', error = 'test' WHERE id = $1`, [app.ids.runA]);
		await app.sql.query(`UPDATE sessions SET state = 'approved' WHERE id = $1`, [app.ids.sessionA]);
		before = await counts();
	});
	afterAll(async () => app?.close());

	const url = (e: LockEntry) => {
		let p = e.route.replace(/\[(\w+)\]/g, (_, name: string) => app.ids[e.params![name]]);
		if (e.action) p += e.action === 'default' ? '' : `?/${e.action}`;
		return p;
	};
	const recording = readFileSync('seeds/recordings/ald-001-shelf-reach.csv');

	for (const e of LOCK_MATRIX.filter((x) => x.refuses)) {
		it(`${key(e.route, e.method, e.action)} is refused`, async () => {
			const headers: Record<string, string> = {
				cookie: app.cookies[e.as ?? 'piA'],
				origin: app.base,
				accept: e.action ? 'text/html' : 'application/json'
			};
			let body: BodyInit | undefined;
			const b = e.body;
			if (b && 'upload' in b) {
				const fd = new FormData();
				fd.append('file', new Blob([recording], { type: 'text/csv' }), 'late-file.csv');
				body = fd;
			} else if (b && 'json' in b) {
				body = JSON.stringify(b.json);
				headers['content-type'] = 'application/json';
			} else {
				body = new URLSearchParams(b && 'form' in b ? b.form : {});
				headers['content-type'] = 'application/x-www-form-urlencoded';
			}
			const res = await fetch(app.base + url(e), { method: e.method, headers, body, redirect: 'manual' });
			const text = await res.text();
			expect(res.status).toBe(409);
			if (e.refuses === 'locked') expect(text).toContain(lockedMessage);
			expect(await counts()).toEqual(before);
		});
	}
});
