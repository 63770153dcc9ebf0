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

const everyone = (status: number): Record<Persona, number> => ({
	anonymous: status,
	admin: status,
	piA: status,
	researcherA: status,
	technicianA: status,
	memberB: status
});
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
	{ route: '/signout', method: 'GET', expect: everyone(303) },
	// POST /signout is exercised by its own tests (it ends the persona's session)

	// studies: the list shows one's own studies (administrators: all); a study page is for its team only.
	// Administrators who hold no role get 404 like any non-member (decision in src/lib/server/studies/studies.ts, readStudy).
	{ route: '/studies', method: 'GET', expect: signedIn(200) },
	{
		route: '/studies/[id]',
		method: 'GET',
		params: { id: 'studyA' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	{
		route: '/studies/[id]',
		method: 'GET',
		params: { id: 'studyB' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 404, technicianA: 404, memberB: 200 }
	},
	// a study's settings: its PI only (others on the team 403, everyone else 404); an invalid form is refused with 400
	{
		route: '/studies/[id]/settings',
		method: 'GET',
		params: { id: 'studyA' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 403, technicianA: 403, memberB: 404 }
	},
	{
		route: '/studies/[id]/settings',
		method: 'POST',
		action: 'default',
		params: { id: 'studyA' },
		form: { defaultTable: 'none' },
		expect: { anonymous: 303, admin: 404, piA: 400, researcherA: 403, technicianA: 403, memberB: 404 }
	},
	// consent form versions: the team reads them, the PI publishes (an empty form is refused with 400)
	{
		route: '/studies/[id]/consent-forms',
		method: 'GET',
		params: { id: 'studyA' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	{
		route: '/studies/[id]/consent-forms',
		method: 'POST',
		action: 'publish',
		params: { id: 'studyA' },
		expect: { anonymous: 303, admin: 404, piA: 400, researcherA: 403, technicianA: 403, memberB: 404 }
	},
	// participants: the team sees the list and each participant (personal data by role, checked in participants.test.ts)
	{
		route: '/studies/[id]/participants',
		method: 'GET',
		params: { id: 'studyA' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	{
		route: '/studies/[id]/participants',
		method: 'GET',
		params: { id: 'studyB' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 404, technicianA: 404, memberB: 200 }
	},
	{
		route: '/studies/[id]/participants/new',
		method: 'GET',
		params: { id: 'studyA' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 403, technicianA: 200, memberB: 404 }
	},
	{
		route: '/studies/[id]/participants/new',
		method: 'POST',
		action: 'default',
		params: { id: 'studyA' },
		form: { sex: 'female', bodyMassKg: '5', statureM: '1.7' },
		expect: { anonymous: 303, admin: 404, piA: 400, researcherA: 403, technicianA: 400, memberB: 404 }
	},
	{
		route: '/studies/[id]/participants/[pid]',
		method: 'GET',
		params: { id: 'studyA', pid: 'participantA' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	// a participant asked for under another study's URL does not exist there, even for someone on both teams
	{
		route: '/studies/[id]/participants/[pid]/model',
		method: 'GET',
		params: { id: 'studyA', pid: 'participantA' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	{
		route: '/studies/[id]/participants/[pid]/model',
		method: 'GET',
		params: { id: 'studyB', pid: 'participantA' },
		expect: { anonymous: 303, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 404 }
	},
	{
		route: '/studies/[id]/participants/[pid]',
		method: 'GET',
		params: { id: 'studyB', pid: 'participantA' },
		expect: { anonymous: 303, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 404 }
	},
	{
		route: '/studies/[id]/participants/[pid]',
		method: 'POST',
		action: 'length',
		params: { id: 'studyA', pid: 'participantA' },
		form: { segment: 'right.thigh', lengthM: '41' },
		expect: { anonymous: 303, admin: 404, piA: 400, researcherA: 403, technicianA: 400, memberB: 404 }
	},
	{
		route: '/studies/[id]/participants/[pid]',
		method: 'POST',
		action: 'personal',
		params: { id: 'studyA', pid: 'participantA' },
		form: { email: 'not-an-address' },
		expect: { anonymous: 303, admin: 404, piA: 400, researcherA: 403, technicianA: 400, memberB: 404 }
	},
	// correcting research fields: PI and technicians (an out-of-range body mass is refused with 400)
	{
		route: '/studies/[id]/participants/[pid]',
		method: 'POST',
		action: 'research',
		params: { id: 'studyA', pid: 'participantA' },
		form: { sex: 'female', bodyMassKg: '5', statureM: '1.7' },
		expect: { anonymous: 303, admin: 404, piA: 400, researcherA: 403, technicianA: 400, memberB: 404 }
	},
	// CSV import: PI and technicians; a check without a file and an import without a checked file are refused with 400
	{
		route: '/studies/[id]/participants/import',
		method: 'GET',
		params: { id: 'studyA' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 403, technicianA: 200, memberB: 404 }
	},
	{
		route: '/studies/[id]/participants/import',
		method: 'POST',
		action: 'check',
		params: { id: 'studyA' },
		expect: { anonymous: 303, admin: 404, piA: 400, researcherA: 403, technicianA: 400, memberB: 404 }
	},
	{
		route: '/studies/[id]/participants/import',
		method: 'POST',
		action: 'import',
		params: { id: 'studyA' },
		expect: { anonymous: 303, admin: 404, piA: 400, researcherA: 403, technicianA: 400, memberB: 404 }
	},
	// the audit log and its export: administrators only
	{ route: '/audit', method: 'GET', expect: { ...signedIn(403), admin: 200 } },
	{ route: '/audit/export.csv', method: 'GET', expect: { ...signedIn(403), admin: 200 } },
	// one's own account; an empty password form is refused before any password is checked
	{ route: '/account', method: 'GET', expect: signedIn(200) },
	{ route: '/account', method: 'POST', action: 'password', expect: signedIn(400) },
	// the note after a password change is for the signed-out person; someone signed in is sent to the account page
	{ route: '/account/password-changed', method: 'GET', expect: { ...signedIn(303), anonymous: 200 } },

	// people: lab administrators only. The matrix has no person to point [id] at, so it gets a study's id, which is
	// no person: administrators get 404 (the real pages are exercised in tests/integration/people.test.ts)
	{ route: '/people', method: 'GET', expect: { ...signedIn(403), admin: 200 } },
	{ route: '/people/invite', method: 'GET', expect: { ...signedIn(403), admin: 200 } },
	{
		route: '/people/invite',
		method: 'POST',
		action: 'default',
		form: { email: 'not-an-address' },
		expect: { ...signedIn(403), admin: 400 }
	},
	{ route: '/people/[id]', method: 'GET', params: { id: 'studyA' }, expect: { ...signedIn(403), admin: 404 } },
	{
		route: '/people/[id]',
		method: 'POST',
		action: 'role',
		params: { id: 'studyA' },
		form: { studyId: 'none', role: 'pi' },
		expect: { ...signedIn(403), admin: 404 }
	},
	{
		route: '/people/[id]',
		method: 'POST',
		action: 'admin',
		params: { id: 'studyA' },
		form: { isAdmin: 'maybe' },
		expect: { ...signedIn(403), admin: 404 }
	},
	{ route: '/people/[id]', method: 'POST', action: 'deactivate', params: { id: 'studyA' }, expect: { ...signedIn(403), admin: 404 } },
	{ route: '/people/[id]', method: 'POST', action: 'reactivate', params: { id: 'studyA' }, expect: { ...signedIn(403), admin: 404 } },
	// single-use links need no sign-in; a study's id is no token, so everyone gets the calm "cannot be used" page,
	// and a form sent to it is refused as gone before its fields matter
	{ route: '/invitation/[token]', method: 'GET', params: { token: 'studyA' }, expect: everyone(200) },
	{
		route: '/invitation/[token]',
		method: 'POST',
		action: 'default',
		params: { token: 'studyA' },
		form: { name: 'Test Person' },
		expect: everyone(410)
	},
	{ route: '/reset-password/[token]', method: 'GET', params: { token: 'studyA' }, expect: everyone(200) },
	{
		route: '/reset-password/[token]',
		method: 'POST',
		action: 'default',
		params: { token: 'studyA' },
		form: { password: 'too short' },
		expect: everyone(410)
	},
	// e-mailed consent (tests/integration/consent.test.ts): the team reads a participant's consent state and history;
	// PI and technicians send links (ALD-001 has consented, so each send is refused with 409 and nothing is mailed);
	// the PI decides on flagged runs (an empty form is refused with 400)
	{
		route: '/studies/[id]/participants/[pid]/consent',
		method: 'GET',
		params: { id: 'studyA', pid: 'participantA' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	{
		route: '/studies/[id]/participants/[pid]/consent',
		method: 'GET',
		params: { id: 'studyB', pid: 'participantA' },
		expect: { anonymous: 303, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 404 }
	},
	{
		route: '/studies/[id]/participants/[pid]/consent',
		method: 'POST',
		action: 'invite',
		params: { id: 'studyA', pid: 'participantA' },
		expect: { anonymous: 303, admin: 404, piA: 409, researcherA: 403, technicianA: 409, memberB: 404 }
	},
	{
		route: '/studies/[id]/participants/[pid]/consent',
		method: 'POST',
		action: 'resend',
		params: { id: 'studyA', pid: 'participantA' },
		expect: { anonymous: 303, admin: 404, piA: 409, researcherA: 403, technicianA: 409, memberB: 404 }
	},
	{
		route: '/studies/[id]/participants/[pid]/consent',
		method: 'POST',
		action: 'remind',
		params: { id: 'studyA', pid: 'participantA' },
		expect: { anonymous: 303, admin: 404, piA: 409, researcherA: 403, technicianA: 409, memberB: 404 }
	},
	{
		route: '/studies/[id]/participants/[pid]/consent',
		method: 'POST',
		action: 'decide',
		params: { id: 'studyA', pid: 'participantA' },
		expect: { anonymous: 303, admin: 404, piA: 400, researcherA: 403, technicianA: 403, memberB: 404 }
	},
	// the participant's consent and withdrawal pages need no sign-in; a study's id is no token: the calm page, and 410 for a form
	{ route: '/consent/[token]', method: 'GET', params: { token: 'studyA' }, expect: everyone(200) },
	{
		route: '/consent/[token]',
		method: 'POST',
		action: 'consent',
		params: { token: 'studyA' },
		form: { fullName: 'Test Person' },
		expect: everyone(410)
	},
	{ route: '/consent/[token]', method: 'POST', action: 'decline', params: { token: 'studyA' }, expect: everyone(410) },
	{ route: '/consent/withdraw/[token]', method: 'GET', params: { token: 'studyA' }, expect: everyone(200) },
	{ route: '/consent/withdraw/[token]', method: 'POST', action: 'default', params: { token: 'studyA' }, expect: everyone(410) },
	// asking for a reset link: an address that is no address is refused before anything is looked up
	{ route: '/signin/forgot', method: 'GET', expect: everyone(200) },
	{ route: '/signin/forgot', method: 'POST', action: 'default', form: { email: 'not-an-address' }, expect: everyone(400) },
	// sessions: PI and technicians create and edit them (an invalid form is refused with 400), the team reads them;
	// a session asked for under another study's URL does not exist there
	{
		route: '/studies/[id]/participants/[pid]/sessions/new',
		method: 'GET',
		params: { id: 'studyA', pid: 'participantA' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 403, technicianA: 200, memberB: 404 }
	},
	{
		route: '/studies/[id]/participants/[pid]/sessions/new',
		method: 'POST',
		action: 'default',
		params: { id: 'studyA', pid: 'participantA' },
		form: { operator: '', limbs: 'right.arm' },
		expect: { anonymous: 303, admin: 404, piA: 400, researcherA: 403, technicianA: 400, memberB: 404 }
	},
	{
		route: '/studies/[id]/sessions/[sid]',
		method: 'GET',
		params: { id: 'studyA', sid: 'sessionA' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	{
		route: '/studies/[id]/sessions/[sid]',
		method: 'GET',
		params: { id: 'studyB', sid: 'sessionA' },
		expect: { anonymous: 303, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 404 }
	},
	// review workflow (tests/integration/workflow.test.ts): researchers and the PI submit, the PI approves, returns, reopens and asks
	// for a signing code. The seeded session is a draft: an empty submit is refused with 400 (no summary); the PI's other steps
	// are refused with 409 (wrong state) before any field is read; technicians 403
	{
		route: '/studies/[id]/sessions/[sid]',
		method: 'POST',
		action: 'submit',
		params: { id: 'studyA', sid: 'sessionA' },
		expect: { anonymous: 303, admin: 404, piA: 400, researcherA: 400, technicianA: 403, memberB: 404 }
	},
	{
		route: '/studies/[id]/sessions/[sid]',
		method: 'POST',
		action: 'submit',
		params: { id: 'studyB', sid: 'sessionA' },
		expect: { anonymous: 303, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 404 }
	},
	{
		route: '/studies/[id]/sessions/[sid]',
		method: 'POST',
		action: 'approve',
		params: { id: 'studyA', sid: 'sessionA' },
		expect: { anonymous: 303, admin: 404, piA: 409, researcherA: 403, technicianA: 403, memberB: 404 }
	},
	{
		route: '/studies/[id]/sessions/[sid]',
		method: 'POST',
		action: 'return',
		params: { id: 'studyA', sid: 'sessionA' },
		expect: { anonymous: 303, admin: 404, piA: 409, researcherA: 403, technicianA: 403, memberB: 404 }
	},
	{
		route: '/studies/[id]/sessions/[sid]',
		method: 'POST',
		action: 'reopen',
		params: { id: 'studyA', sid: 'sessionA' },
		expect: { anonymous: 303, admin: 404, piA: 409, researcherA: 403, technicianA: 403, memberB: 404 }
	},
	{
		route: '/studies/[id]/sessions/[sid]',
		method: 'POST',
		action: 'code',
		params: { id: 'studyA', sid: 'sessionA' },
		expect: { anonymous: 303, admin: 404, piA: 409, researcherA: 403, technicianA: 403, memberB: 404 }
	},
	{
		route: '/studies/[id]/sessions/[sid]/edit',
		method: 'GET',
		params: { id: 'studyA', sid: 'sessionA' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 403, technicianA: 200, memberB: 404 }
	},
	{
		route: '/studies/[id]/sessions/[sid]/edit',
		method: 'POST',
		action: 'default',
		params: { id: 'studyA', sid: 'sessionA' },
		form: { operator: '' },
		expect: { anonymous: 303, admin: 404, piA: 400, researcherA: 403, technicianA: 400, memberB: 404 }
	},
	// the streamed trial upload (API: 401 when signed out); a body that is not multipart is refused with 415 before
	// anything is read (the uploads themselves are exercised in tests/integration/uploads.test.ts); study B's
	// researcher is refused by role (403) before the session is looked up
	{
		route: '/api/studies/[id]/sessions/[sid]/trials',
		method: 'POST',
		params: { id: 'studyA', sid: 'sessionA' },
		expect: { anonymous: 401, admin: 404, piA: 415, researcherA: 403, technicianA: 415, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/sessions/[sid]/trials',
		method: 'POST',
		params: { id: 'studyB', sid: 'sessionA' },
		expect: { anonymous: 401, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 403 }
	},
	// runs (tests/integration/runs.test.ts): the team reads trials, runs and results, and every role of the team may start
	// and retry runs (run.start); an empty "New run" form is refused with 400, the JSON API wants JSON (415 for a form),
	// and the seeded run is done, so a retry is refused with 409. A trial or run under another study's URL is not there.
	{
		route: '/studies/[id]/trials/[tid]',
		method: 'GET',
		params: { id: 'studyA', tid: 'trialA' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	{
		route: '/studies/[id]/trials/[tid]',
		method: 'GET',
		params: { id: 'studyB', tid: 'trialA' },
		expect: { anonymous: 303, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 404 }
	},
	{
		route: '/studies/[id]/trials/[tid]',
		method: 'POST',
		action: 'start',
		params: { id: 'studyA', tid: 'trialA' },
		expect: { anonymous: 303, admin: 404, piA: 400, researcherA: 400, technicianA: 400, memberB: 404 }
	},
	{
		route: '/studies/[id]/trials/[tid]',
		method: 'POST',
		action: 'start',
		params: { id: 'studyB', tid: 'trialA' },
		form: { filter: 'none' },
		expect: { anonymous: 303, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 404 }
	},
	{
		route: '/studies/[id]/runs/[rid]',
		method: 'GET',
		params: { id: 'studyA', rid: 'runA' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	{
		route: '/studies/[id]/runs/[rid]',
		method: 'GET',
		params: { id: 'studyB', rid: 'runA' },
		expect: { anonymous: 303, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 404 }
	},
	{
		route: '/studies/[id]/runs/[rid]',
		method: 'POST',
		action: 'retry',
		params: { id: 'studyA', rid: 'runA' },
		expect: { anonymous: 303, admin: 404, piA: 409, researcherA: 409, technicianA: 409, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/trials/[tid]/runs',
		method: 'POST',
		params: { id: 'studyA', tid: 'trialA' },
		expect: { anonymous: 401, admin: 404, piA: 415, researcherA: 415, technicianA: 415, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/trials/[tid]/runs',
		method: 'POST',
		params: { id: 'studyB', tid: 'trialA' },
		expect: { anonymous: 401, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/trials/[tid]/residuals',
		method: 'GET',
		params: { id: 'studyA', tid: 'trialA' },
		expect: { anonymous: 401, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/trials/[tid]/residuals',
		method: 'GET',
		params: { id: 'studyB', tid: 'trialA' },
		expect: { anonymous: 401, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/runs/[rid]',
		method: 'GET',
		params: { id: 'studyA', rid: 'runA' },
		expect: { anonymous: 401, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/runs/[rid]',
		method: 'GET',
		params: { id: 'studyB', rid: 'runA' },
		expect: { anonymous: 401, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/runs/[rid]/series',
		method: 'GET',
		params: { id: 'studyA', rid: 'runA' },
		expect: { anonymous: 401, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/runs/[rid]/series',
		method: 'GET',
		params: { id: 'studyB', rid: 'runA' },
		expect: { anonymous: 401, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/runs/[rid]/summary',
		method: 'GET',
		params: { id: 'studyA', rid: 'runA' },
		expect: { anonymous: 401, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/runs/[rid]/retry',
		method: 'POST',
		params: { id: 'studyA', rid: 'runA' },
		expect: { anonymous: 401, admin: 404, piA: 409, researcherA: 409, technicianA: 409, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/runs/[rid]/retry',
		method: 'POST',
		params: { id: 'studyB', rid: 'runA' },
		expect: { anonymous: 401, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 404 }
	},
	// export of an approved session (pi, researcher; the seeded session is a draft: 409) and the printable report (the team)
	{
		route: '/api/studies/[id]/sessions/[sid]/export',
		method: 'GET',
		params: { id: 'studyA', sid: 'sessionA' },
		expect: { anonymous: 401, admin: 404, piA: 409, researcherA: 409, technicianA: 403, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/sessions/[sid]/export',
		method: 'GET',
		params: { id: 'studyB', sid: 'sessionA' },
		expect: { anonymous: 401, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 404 }
	},
	{
		route: '/studies/[id]/sessions/[sid]/report',
		method: 'GET',
		params: { id: 'studyA', sid: 'sessionA' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	{
		route: '/studies/[id]/sessions/[sid]/report',
		method: 'GET',
		params: { id: 'studyB', sid: 'sessionA' },
		expect: { anonymous: 303, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 404 }
	},
	// review: plot data of a session, a run's cycle events (marking them: those who may start runs; an empty list is
	// refused with 400), and the compare page (the team)
	{
		route: '/api/studies/[id]/sessions/[sid]/review',
		method: 'GET',
		params: { id: 'studyA', sid: 'sessionA' },
		expect: { anonymous: 401, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/sessions/[sid]/review',
		method: 'GET',
		params: { id: 'studyB', sid: 'sessionA' },
		expect: { anonymous: 401, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/runs/[rid]/events',
		method: 'GET',
		params: { id: 'studyA', rid: 'runA' },
		expect: { anonymous: 401, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/runs/[rid]/events',
		method: 'GET',
		params: { id: 'studyB', rid: 'runA' },
		expect: { anonymous: 401, admin: 404, piA: 404, researcherA: 404, technicianA: 404, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/runs/[rid]/events',
		method: 'POST',
		params: { id: 'studyA', rid: 'runA' },
		form: { times: '' },
		expect: { anonymous: 401, admin: 404, piA: 400, researcherA: 400, technicianA: 400, memberB: 404 }
	},
	{
		route: '/studies/[id]/compare',
		method: 'GET',
		params: { id: 'studyA' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	{
		route: '/studies/[id]/compare',
		method: 'GET',
		params: { id: 'studyB' },
		expect: { anonymous: 303, admin: 404, piA: 200, researcherA: 404, technicianA: 404, memberB: 200 }
	},
	// column-mapping presets: the team lists them, PI and technicians save them (an empty one is refused with 400)
	{
		route: '/api/studies/[id]/mapping-presets',
		method: 'GET',
		params: { id: 'studyA' },
		expect: { anonymous: 401, admin: 404, piA: 200, researcherA: 200, technicianA: 200, memberB: 404 }
	},
	{
		route: '/api/studies/[id]/mapping-presets',
		method: 'POST',
		params: { id: 'studyA' },
		expect: { anonymous: 401, admin: 404, piA: 400, researcherA: 403, technicianA: 400, memberB: 404 }
	}
];

/** Routes whose form actions are deliberately left out of the generic run, with the reason. */
export const EXEMPT_ACTIONS: Record<string, string> = {
	'/signout': 'ends the session under test; covered by tests/e2e/sign-in.spec.ts and tests/integration/sign-in.test.ts'
};
