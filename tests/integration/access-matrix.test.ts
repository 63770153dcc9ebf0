// Runs the authorization matrix against the built app, and checks that every route in src/routes has entries.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { MATRIX, EXEMPT_ACTIONS, type MatrixEntry, type ParamRef } from './access-matrix';
import { PERSONAS, startApp, type AppUnderTest, type Persona } from './app-under-test';
import { routeTree } from './route-tree';

describe('the matrix covers the route tree', () => {
	const tree = routeTree();
	const has = (route: string, method: string, action?: string) =>
		MATRIX.some((e) => e.route === route && e.method === method && (action === undefined || e.action === action));
	for (const r of tree) {
		if (r.page) it(`GET ${r.route} has an entry`, () => expect(has(r.route, 'GET')).toBe(true));
		for (const a of r.actions) {
			it(`POST ${r.route} ?/${a} has an entry`, () => expect(has(r.route, 'POST', a) || r.route in EXEMPT_ACTIONS).toBe(true));
		}
		for (const m of r.methods) it(`${m} ${r.route} has an entry`, () => expect(has(r.route, m)).toBe(true));
	}
	it('has no entry for a route that does not exist', () => {
		const routes = new Set(tree.map((r) => r.route));
		expect(MATRIX.filter((e) => !routes.has(e.route)).map((e) => e.route)).toEqual([]);
	});
});

describe('every route answers each persona as the matrix says', () => {
	let app: AppUnderTest;
	const refs = new Map<ParamRef, string>();
	beforeAll(async () => {
		app = await startApp('matrix');
		for (const [ref, id] of Object.entries(app.ids)) refs.set(ref as ParamRef, id);
	});
	afterAll(async () => app?.close());

	const url = (e: MatrixEntry) => {
		let p = e.route.replace(/\[(\w+)\]/g, (_, name: string) => {
			const ref = e.params?.[name];
			if (!ref) throw new Error(`${e.route}: no value for [${name}] in the matrix entry`);
			return refs.get(ref)!;
		});
		if (e.action) p += e.action === 'default' ? '' : `?/${e.action}`;
		return p;
	};

	for (const e of MATRIX) {
		it(`${e.method} ${e.route}${e.action ? ` ?/${e.action}` : ''}`, async () => {
			const got: Partial<Record<Persona, number>> = {};
			for (const persona of Object.keys(PERSONAS) as Persona[]) {
				// accept: text/html makes a form post behave as a browser's (SvelteKit answers other clients with JSON)
				const headers: Record<string, string> = { cookie: app.cookies[persona], origin: app.base, accept: 'text/html' };
				let body: URLSearchParams | undefined;
				if (e.method !== 'GET') {
					body = new URLSearchParams(e.form ?? {});
					headers['content-type'] = 'application/x-www-form-urlencoded';
				}
				const res = await fetch(app.base + url(e), { method: e.method, headers, body, redirect: 'manual' });
				got[persona] = res.status;
			}
			expect(got).toEqual(e.expect);
		});
	}
});
