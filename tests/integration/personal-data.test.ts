// Personal-data sweep: every GET route in the access matrix that a researcher may load — the HTML, the page's data
// as SvelteKit sends it to client-side navigation (__data.json), and JSON APIs — shows no participant's name,
// e-mail address or phone number. Routes added to the matrix later are swept without touching this file.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import { MATRIX, type MatrixEntry, type ParamRef } from './access-matrix';
import { startApp, type AppUnderTest, type Persona } from './app-under-test';

const seed = JSON.parse(fs.readFileSync('seeds/demo/participants.json', 'utf8')) as {
	studies: Record<string, { participants: { fullName: string; email: string; phone: string | null }[] }>;
};
const people = Object.values(seed.studies).flatMap((s) => s.participants);
const names = people.map((p) => p.fullName);
/** Every personal string, also a phone number written without spaces (as in a tel: link). */
const secrets = [
	...new Set(
		people.flatMap((p) => [p.fullName, p.email, ...(p.phone ? [p.phone, p.phone.replace(/\s+/g, '')] : [])]).map((s) => s.toLowerCase())
	)
];

let app: AppUnderTest;
const refs = new Map<ParamRef, string>();
beforeAll(async () => {
	app = await startApp('personal_data');
	for (const [ref, id] of Object.entries(app.ids)) refs.set(ref as ParamRef, id);
});
afterAll(async () => {
	await app?.close();
});

const pathOf = (e: MatrixEntry) =>
	e.route.replace(/\[(\w+)\]/g, (_, name: string) => {
		const ref = e.params?.[name];
		if (!ref) throw new Error(`${e.route}: no value for [${name}] in the matrix entry`);
		return refs.get(ref)!;
	});
const label = (e: MatrixEntry) => `${e.route}${e.params ? ` (${Object.values(e.params).join(', ')})` : ''}`;

/** The whole body, or for an event stream what it sends within a second (it would never end). */
async function bodyText(res: Response): Promise<string> {
	if (!(res.headers.get('content-type') ?? '').startsWith('text/event-stream')) return res.text();
	const reader = res.body!.getReader();
	const decoder = new TextDecoder();
	let text = '';
	const until = Date.now() + 1_000;
	while (Date.now() < until) {
		const next = await Promise.race([reader.read(), new Promise<null>((r) => setTimeout(() => r(null), until - Date.now()))]);
		if (!next || next.done) break;
		text += decoder.decode(next.value, { stream: true });
	}
	await reader.cancel();
	return text;
}

/** The body of the route and, for a page, of its __data.json; both must answer 200. */
async function bodiesOf(e: MatrixEntry, persona: Persona): Promise<{ what: string; text: string }[]> {
	const path = pathOf(e);
	const cookie = app.cookies[persona];
	const res = await fetch(app.base + path, {
		headers: { cookie, accept: 'text/html' },
		redirect: 'manual',
		signal: AbortSignal.timeout(30_000)
	});
	expect(res.status, `GET ${path} as ${persona}`).toBe(200);
	const out = [{ what: `GET ${path}`, text: await bodyText(res) }];
	if ((res.headers.get('content-type') ?? '').startsWith('text/html')) {
		const dataPath = `${path.replace(/\/$/, '')}/__data.json`;
		const data = await fetch(app.base + dataPath, { headers: { cookie, accept: '*/*' }, redirect: 'manual' });
		expect(data.status, `GET ${dataPath} as ${persona}`).toBe(200);
		out.push({ what: `GET ${dataPath}`, text: await data.text() });
	}
	return out;
}

const researcherRoutes = MATRIX.filter((e) => e.method === 'GET' && e.expect.researcherA === 200);

describe('a researcher sees no personal data anywhere', () => {
	it('sweeps a fair share of the app', () => {
		// the participant list and one participant at least, so that a broken filter cannot make the sweep empty
		expect(researcherRoutes.map((e) => e.route)).toEqual(
			expect.arrayContaining(['/studies/[id]/participants', '/studies/[id]/participants/[pid]'])
		);
	});
	for (const e of researcherRoutes) {
		it(label(e), async () => {
			for (const { what, text } of await bodiesOf(e, 'researcherA')) {
				const lower = text.toLowerCase();
				const leaked = secrets.filter((s) => lower.includes(s));
				expect(leaked, `${what} shows personal data`).toEqual([]);
			}
		});
	}
});

describe('the sweep can see personal data when it is there', () => {
	it("the PI's view of the same routes contains participants' names", async () => {
		const seen = new Set<string>();
		for (const e of MATRIX.filter((m) => m.method === 'GET' && m.expect.piA === 200 && researcherRoutes.includes(m))) {
			for (const { text } of await bodiesOf(e, 'piA')) for (const n of names) if (text.includes(n)) seen.add(n);
		}
		expect(seen.size).toBeGreaterThan(0);
		expect(seen).toContain(names[0]);
	});
});
