// The authorization matrix: every page, form action and API route × persona → expected HTTP status.
// tests/integration/access-matrix.test.ts fails when a route exists without an entry here.
import type { Persona } from './app-under-test';

/** Named records a route parameter can stand for; resolved against the seeded demo database. */
export type ParamRef = 'studyA' | 'studyB' | 'participantA' | 'sessionA' | 'trialA' | 'runA';

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

type Expect = Record<Persona, number>;
type Params = Record<string, ParamRef>;

const everyone = (status: number): Expect => ({
	anonymous: status,
	admin: status,
	piA: status,
	researcherA: status,
	technicianA: status,
	memberB: status
});
const signedIn = (status: number, anonymous = 303): Expect => ({ ...everyone(status), anonymous });
/** Lab administrators only: the others signed in get 403. */
const adminOnly = (status: number): Expect => ({ ...signedIn(403), admin: status });
/** The answer of the JSON API to someone signed out (pages send them to sign in with 303). */
const API = 401;
/**
 * A page of study A: its PI, researcher and technician get the given statuses; administrators (who hold no role)
 * and study B's member get 404.
 */
const teamA = (pi: number, researcher: number, technician: number, anonymous = 303): Expect => ({
	anonymous,
	admin: 404,
	piA: pi,
	researcherA: researcher,
	technicianA: technician,
	memberB: 404
});
/** A page of study B: its member and piA (on both teams) get `status`, everyone else signed in 404. */
const teamB = (status: number): Expect => ({ ...signedIn(404), piA: status, memberB: status });
/** A record of study A asked for under study B's URL: it does not exist there, even for someone on both teams. */
const notThere = (anonymous = 303): Expect => signedIn(404, anonymous);

/** A page or GET endpoint. */
const get = (route: string, expect: Expect, params?: Params): MatrixEntry => ({ route, method: 'GET', params, expect });
/** A POST to an endpoint (+server.ts). */
const post = (route: string, expect: Expect, params?: Params, form?: Record<string, string>): MatrixEntry => ({
	route,
	method: 'POST',
	params,
	form,
	expect
});
/** A form action ("default" for an unnamed one). */
const act = (route: string, action: string, expect: Expect, params?: Params, form?: Record<string, string>): MatrixEntry => ({
	...post(route, expect, params, form),
	action
});
/** An entry for a record of study A, then the same request under study B's URL, where the record is not there. */
const inAAndB = (entry: MatrixEntry, inB: Params): MatrixEntry[] => [
	entry,
	{ ...entry, params: inB, expect: notThere(entry.expect.anonymous) }
];

export const studyA: Params = { id: 'studyA' };
const studyB: Params = { id: 'studyB' };
const participantA: Params = { ...studyA, pid: 'participantA' };
export const sessionA: Params = { ...studyA, sid: 'sessionA' };
export const trialA: Params = { ...studyA, tid: 'trialA' };
export const runA: Params = { ...studyA, rid: 'runA' };
/** Study A's records under study B's URL. */
const participantInB: Params = { ...participantA, ...studyB };
const sessionInB: Params = { ...sessionA, ...studyB };
const trialInB: Params = { ...trialA, ...studyB };
const runInB: Params = { ...runA, ...studyB };
/** A study's id where a person or a single-use token is wanted: it stands for no such thing. */
const noPerson: Params = { id: 'studyA' };
const noToken: Params = { token: 'studyA' };
const invalidResearchFields = { sex: 'female', bodyMassKg: '5', statureM: '1.7' };

export const MATRIX: MatrixEntry[] = [
	get('/', everyone(200)),
	get('/status', everyone(200)),
	get('/research-use', everyone(200)),
	get('/api/health', everyone(200)),
	// signed-in people are sent on from the sign-in page
	get('/signin', signedIn(303, 200)),
	// an empty form is refused before anything is looked up (signed-in people are sent on by the page load)
	act('/signin', 'link', signedIn(303, 400)),
	act('/signin', 'password', signedIn(303, 400)),
	get('/signin/check-email', everyone(200)),
	get('/signout', everyone(303)),
	// POST /signout is exercised by its own tests (it ends the persona's session)

	// studies: the list shows one's own studies (administrators: all); a study page is for its team only.
	// Administrators who hold no role get 404 like any non-member (decision in src/lib/server/studies/studies.ts, readStudy).
	get('/studies', signedIn(200)),
	get('/studies/[id]', teamA(200, 200, 200), studyA),
	get('/studies/[id]', teamB(200), studyB),
	// a study's settings: its PI only (others on the team 403, everyone else 404); an invalid form is refused with 400
	get('/studies/[id]/settings', teamA(200, 403, 403), studyA),
	act('/studies/[id]/settings', 'default', teamA(400, 403, 403), studyA, { defaultTable: 'none' }),
	// consent form versions: the team reads them, the PI publishes (an empty form is refused with 400)
	get('/studies/[id]/consent-forms', teamA(200, 200, 200), studyA),
	act('/studies/[id]/consent-forms', 'publish', teamA(400, 403, 403), studyA),
	// participants: the team sees the list and each participant (personal data by role, checked in participants.test.ts)
	get('/studies/[id]/participants', teamA(200, 200, 200), studyA),
	get('/studies/[id]/participants', teamB(200), studyB),
	get('/studies/[id]/participants/new', teamA(200, 403, 200), studyA),
	act('/studies/[id]/participants/new', 'default', teamA(400, 403, 400), studyA, invalidResearchFields),
	get('/studies/[id]/participants/[pid]', teamA(200, 200, 200), participantA),
	// a participant asked for under another study's URL does not exist there, even for someone on both teams
	...inAAndB(get('/studies/[id]/participants/[pid]/model', teamA(200, 200, 200), participantA), participantInB),
	get('/studies/[id]/participants/[pid]', notThere(), participantInB),
	act('/studies/[id]/participants/[pid]', 'length', teamA(400, 403, 400), participantA, { segment: 'right.thigh', lengthM: '41' }),
	act('/studies/[id]/participants/[pid]', 'personal', teamA(400, 403, 400), participantA, { email: 'not-an-address' }),
	// correcting research fields: PI and technicians (an out-of-range body mass is refused with 400)
	act('/studies/[id]/participants/[pid]', 'research', teamA(400, 403, 400), participantA, invalidResearchFields),
	// CSV import: PI and technicians; a check without a file and an import without a checked file are refused with 400
	get('/studies/[id]/participants/import', teamA(200, 403, 200), studyA),
	act('/studies/[id]/participants/import', 'check', teamA(400, 403, 400), studyA),
	act('/studies/[id]/participants/import', 'import', teamA(400, 403, 400), studyA),
	// the lab's force plates: every signed-in person reads them, lab administrators change them (an empty form is refused
	// with 400: no orientation chosen; archiving without confirming is refused with 400); tests/integration/force-plates.test.ts
	get('/lab/force-plates', signedIn(200)),
	act('/lab/force-plates', 'create', adminOnly(400), undefined, { name: '' }),
	act('/lab/force-plates', 'update', adminOnly(400), undefined, { id: 'none' }),
	act('/lab/force-plates', 'archive', adminOnly(400), undefined, { id: 'none' }),
	// the audit log and its export: administrators only
	get('/audit', adminOnly(200)),
	get('/audit/export.csv', adminOnly(200)),
	// one's own account; an empty password form is refused before any password is checked
	get('/account', signedIn(200)),
	act('/account', 'password', signedIn(400)),
	// the note after a password change is for the signed-out person; someone signed in is sent to the account page
	get('/account/password-changed', signedIn(303, 200)),

	// people: lab administrators only. The matrix has no person to point [id] at, so it gets a study's id, which is
	// no person: administrators get 404 (the real pages are exercised in tests/integration/people.test.ts)
	get('/people', adminOnly(200)),
	get('/people/invite', adminOnly(200)),
	act('/people/invite', 'default', adminOnly(400), undefined, { email: 'not-an-address' }),
	get('/people/[id]', adminOnly(404), noPerson),
	act('/people/[id]', 'role', adminOnly(404), noPerson, { studyId: 'none', role: 'pi' }),
	act('/people/[id]', 'admin', adminOnly(404), noPerson, { isAdmin: 'maybe' }),
	act('/people/[id]', 'deactivate', adminOnly(404), noPerson),
	act('/people/[id]', 'reactivate', adminOnly(404), noPerson),
	// single-use links need no sign-in; a study's id is no token, so everyone gets the calm "cannot be used" page,
	// and a form sent to it is refused as gone before its fields matter
	get('/invitation/[token]', everyone(200), noToken),
	act('/invitation/[token]', 'default', everyone(410), noToken, { name: 'Test Person' }),
	get('/reset-password/[token]', everyone(200), noToken),
	act('/reset-password/[token]', 'default', everyone(410), noToken, { password: 'too short' }),
	// e-mailed consent (tests/integration/consent.test.ts): the team reads a participant's consent state and history;
	// PI and technicians send links (ALD-001 has consented, so each send is refused with 409 and nothing is mailed);
	// the PI decides on flagged runs (an empty form is refused with 400)
	...inAAndB(get('/studies/[id]/participants/[pid]/consent', teamA(200, 200, 200), participantA), participantInB),
	act('/studies/[id]/participants/[pid]/consent', 'invite', teamA(409, 403, 409), participantA),
	act('/studies/[id]/participants/[pid]/consent', 'resend', teamA(409, 403, 409), participantA),
	act('/studies/[id]/participants/[pid]/consent', 'remind', teamA(409, 403, 409), participantA),
	act('/studies/[id]/participants/[pid]/consent', 'decide', teamA(400, 403, 403), participantA),
	// the participant's consent and withdrawal pages need no sign-in; a study's id is no token: the calm page, and 410 for a form
	get('/consent/[token]', everyone(200), noToken),
	act('/consent/[token]', 'consent', everyone(410), noToken, { fullName: 'Test Person' }),
	act('/consent/[token]', 'decline', everyone(410), noToken),
	get('/consent/withdraw/[token]', everyone(200), noToken),
	act('/consent/withdraw/[token]', 'default', everyone(410), noToken),
	// asking for a reset link: an address that is no address is refused before anything is looked up
	get('/signin/forgot', everyone(200)),
	act('/signin/forgot', 'default', everyone(400), undefined, { email: 'not-an-address' }),
	// sessions: PI and technicians create and edit them (an invalid form is refused with 400), the team reads them;
	// a session asked for under another study's URL does not exist there
	get('/studies/[id]/participants/[pid]/sessions/new', teamA(200, 403, 200), participantA),
	act('/studies/[id]/participants/[pid]/sessions/new', 'default', teamA(400, 403, 400), participantA, { operator: '', limbs: 'right.arm' }),
	...inAAndB(get('/studies/[id]/sessions/[sid]', teamA(200, 200, 200), sessionA), sessionInB),
	// review workflow (tests/integration/workflow.test.ts): researchers and the PI submit, the PI approves, returns, reopens and asks
	// for a signing code. The seeded session is a draft: an empty submit is refused with 400 (no summary); the PI's other steps
	// are refused with 409 (wrong state) before any field is read; technicians 403
	...inAAndB(act('/studies/[id]/sessions/[sid]', 'submit', teamA(400, 400, 403), sessionA), sessionInB),
	act('/studies/[id]/sessions/[sid]', 'approve', teamA(409, 403, 403), sessionA),
	act('/studies/[id]/sessions/[sid]', 'return', teamA(409, 403, 403), sessionA),
	act('/studies/[id]/sessions/[sid]', 'reopen', teamA(409, 403, 403), sessionA),
	act('/studies/[id]/sessions/[sid]', 'code', teamA(409, 403, 403), sessionA),
	get('/studies/[id]/sessions/[sid]/edit', teamA(200, 403, 200), sessionA),
	act('/studies/[id]/sessions/[sid]/edit', 'default', teamA(400, 403, 400), sessionA, { operator: '' }),
	// the streamed trial upload (API: 401 when signed out); a body that is not multipart is refused with 415 before
	// anything is read (the uploads themselves are exercised in tests/integration/uploads.test.ts); study B's
	// researcher is refused by role (403) before the session is looked up
	post('/api/studies/[id]/sessions/[sid]/trials', teamA(415, 403, 415, API), sessionA),
	post('/api/studies/[id]/sessions/[sid]/trials', { ...notThere(API), memberB: 403 }, sessionInB),
	// runs (tests/integration/runs.test.ts): the team reads trials, runs and results, and every role of the team may start
	// and retry runs (run.start); an empty "New run" form is refused with 400, the JSON API wants JSON (415 for a form),
	// and the seeded run is done, so a retry is refused with 409. A trial or run under another study's URL is not there.
	...inAAndB(get('/studies/[id]/trials/[tid]', teamA(200, 200, 200), trialA), trialInB),
	act('/studies/[id]/trials/[tid]', 'start', teamA(400, 400, 400), trialA),
	act('/studies/[id]/trials/[tid]', 'start', notThere(), trialInB, { filter: 'none' }),
	...inAAndB(get('/studies/[id]/runs/[rid]', teamA(200, 200, 200), runA), runInB),
	act('/studies/[id]/runs/[rid]', 'retry', teamA(409, 409, 409), runA),
	// "Re-run with these feet" on a run's foot contacts: the seeded run has no force data, so it is refused with 400
	...inAAndB(act('/studies/[id]/runs/[rid]', 'rerunFeet', teamA(400, 400, 400), runA), runInB),
	...inAAndB(post('/api/studies/[id]/trials/[tid]/runs', teamA(415, 415, 415, API), trialA), trialInB),
	...inAAndB(get('/api/studies/[id]/trials/[tid]/residuals', teamA(200, 200, 200, API), trialA), trialInB),
	...inAAndB(get('/api/studies/[id]/runs/[rid]', teamA(200, 200, 200, API), runA), runInB),
	...inAAndB(get('/api/studies/[id]/runs/[rid]/series', teamA(200, 200, 200, API), runA), runInB),
	get('/api/studies/[id]/runs/[rid]/summary', teamA(200, 200, 200, API), runA),
	// a run's ground reaction forces and gait results (the seeded run has no force data: gait false, 200)
	...inAAndB(get('/api/studies/[id]/runs/[rid]/gait', teamA(200, 200, 200, API), runA), runInB),
	...inAAndB(post('/api/studies/[id]/runs/[rid]/retry', teamA(409, 409, 409, API), runA), runInB),
	// export of an approved session (pi, researcher; the seeded session is a draft: 409) and the printable report (the team)
	...inAAndB(get('/api/studies/[id]/sessions/[sid]/export', teamA(409, 409, 403, API), sessionA), sessionInB),
	...inAAndB(get('/studies/[id]/sessions/[sid]/report', teamA(200, 200, 200), sessionA), sessionInB),
	// review: plot data of a session, a run's cycle events (marking them: those who may start runs; an empty list is
	// refused with 400), and the compare page (the team)
	...inAAndB(get('/api/studies/[id]/sessions/[sid]/review', teamA(200, 200, 200, API), sessionA), sessionInB),
	...inAAndB(get('/api/studies/[id]/runs/[rid]/events', teamA(200, 200, 200, API), runA), runInB),
	post('/api/studies/[id]/runs/[rid]/events', teamA(400, 400, 400, API), runA, { times: '' }),
	get('/studies/[id]/compare', teamA(200, 200, 200), studyA),
	get('/studies/[id]/compare', teamB(200), studyB),
	// column-mapping presets: the team lists them, PI and technicians save them (an empty one is refused with 400)
	get('/api/studies/[id]/mapping-presets', teamA(200, 200, 200, API), studyA),
	post('/api/studies/[id]/mapping-presets', teamA(400, 403, 400, API), studyA)
];

/** Routes whose form actions are deliberately left out of the generic run, with the reason. */
export const EXEMPT_ACTIONS: Record<string, string> = {
	'/signout': 'ends the session under test; covered by tests/e2e/sign-in.spec.ts and tests/integration/sign-in.test.ts'
};
