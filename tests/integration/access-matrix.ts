// The authorization matrix: every page, form action and API route × persona → expected HTTP status.
// tests/integration/access-matrix.test.ts fails when a route exists without an entry here.
import type { Persona } from './app-under-test';

/** Named records a route parameter can stand for; resolved against the seeded demo database. */
export type ParamRef = 'studyA' | 'studyB';

export interface MatrixEntry {
	/** SvelteKit route id, as the folder path under src/routes (e.g. "/studies/[id]"). */
	route: string;
	method: 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
	/** For form actions: the action name ("default" for an unnamed one). */
	action?: string;
	/** Values for the route's [params]. */
	params?: Record<string, ParamRef>;
	/** Form fields sent with a POST (an empty body is sent when absent). */
	form?: Record<string, string>;
	expect: Record<Persona, number>;
}

const everyone = (status: number): Record<Persona, number> => ({ anonymous: status, admin: status, piA: status, researcherA: status, technicianA: status, memberB: status });
const signedIn = (status: number, anonymous = 303): Record<Persona, number> => ({ ...everyone(status), anonymous });

export const MATRIX: MatrixEntry[] = [
	{ route: '/', method: 'GET', expect: everyone(200) },
	{ route: '/status', method: 'GET', expect: everyone(200) },
	{ route: '/research-use', method: 'GET', expect: everyone(200) },
	{ route: '/api/health', method: 'GET', expect: everyone(200) },
	// signed-in people are sent on from the sign-in page
	{ route: '/signin', method: 'GET', expect: { ...signedIn(303), anonymous: 200 } },
	// an empty form is refused before anything is looked up (signed-in people are sent on by the page load)
	{ route: '/signin', method: 'POST', action: 'link', expect: { ...signedIn(303), anonymous: 400 } },
	{ route: '/signin', method: 'POST', action: 'password', expect: { ...signedIn(303), anonymous: 400 } },
	{ route: '/signin/check-email', method: 'GET', expect: everyone(200) },
	{ route: '/signout', method: 'GET', expect: everyone(303) }
	// POST /signout is exercised by its own tests (it ends the persona's session)
];

/** Routes whose form actions are deliberately left out of the generic run, with the reason. */
export const EXEMPT_ACTIONS: Record<string, string> = {
	'/signout': 'ends the session under test; covered by tests/e2e/sign-in.spec.ts and tests/integration/sign-in.test.ts'
};
