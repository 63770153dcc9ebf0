// Every mutating handler in src/routes (POST/PUT/PATCH/DELETE endpoints, every form action) and what it does when
// its session is approved: refused with the lock's message, refused because of the session's state, or exempt
// with the reason. tests/integration/lock.test.ts fails for a mutating handler that has no entry here.
import { runA, sessionA, trialA, type ParamRef } from './access-matrix';
import type { Persona } from './app-under-test';

export interface LockEntry {
	route: string;
	method: 'POST' | 'PUT' | 'PATCH' | 'DELETE';
	/** Form action name ("default" for an unnamed one); absent for +server.ts endpoints. */
	action?: string;
	params?: Record<string, ParamRef>;
	/** Who sends it: a role allowed to do it, so that the lock (not the role) is what refuses. */
	as?: Persona;
	/** Body: form fields (urlencoded), JSON, or a multipart upload of one small recording. */
	body?: { form: Record<string, string> } | { json: unknown } | { upload: true };
	/** 'locked': 409 with the lock's message; 'state': 409 because the approved state allows no such step. */
	refuses?: 'locked' | 'state';
	exempt?: string;
}

type Body = LockEntry['body'];

/** A POST to an endpoint (+server.ts) of the approved session, refused with the lock's message. */
const lockedPost = (route: string, params: Record<string, ParamRef>, as: Persona, body?: Body): LockEntry => ({
	route,
	method: 'POST',
	params,
	as,
	body,
	refuses: 'locked'
});
/** A form action ("default" for an unnamed one) on the approved session, refused with the lock's message. */
const lockedAction = (route: string, action: string, params: Record<string, ParamRef>, as: Persona, body?: Body): LockEntry => ({
	...lockedPost(route, params, as, body),
	action
});
/** Form actions of one route left out, for one reason. */
const exempt = (reason: string, route: string, ...actions: string[]): LockEntry[] =>
	actions.map((action) => ({ route, method: 'POST', action, exempt: reason }));

const notSession = 'acts on no session, trial or run';
const reopening = 'the one way out of the lock: the PI reopens an approved session, giving a reason (workflow.test.ts)';
const newDraft = 'creates a new draft session; an approved session of the same participant is not touched';
const exclusion = 'after a withdrawal the PI must be able to exclude results, locked or not (the ethics rule comes first)';

export const LOCK_MATRIX: LockEntry[] = [
	// the session, its trials and runs: refused once approved
	lockedPost('/api/studies/[id]/sessions/[sid]/trials', sessionA, 'technicianA', { upload: true }),
	lockedPost('/api/studies/[id]/trials/[tid]/runs', trialA, 'researcherA', { json: { cutoffHz: 6 } }),
	lockedPost('/api/studies/[id]/runs/[rid]/retry', runA, 'technicianA'),
	lockedAction('/studies/[id]/trials/[tid]', 'start', trialA, 'technicianA', { form: { filter: 'lowpass', cutoffHz: '6' } }),
	lockedAction('/studies/[id]/runs/[rid]', 'retry', runA, 'piA'),
	lockedAction('/studies/[id]/runs/[rid]', 'rerunFeet', runA, 'researcherA'),
	lockedAction('/studies/[id]/sessions/[sid]/edit', 'default', sessionA, 'technicianA', { form: { operator: 'x', task: 'y' } }),
	// review data: a run's cycle events
	lockedPost('/api/studies/[id]/runs/[rid]/events', runA, 'researcherA', { json: { times: [0.5, 1] } }),

	// the review workflow: on an approved session every step but reopening answers with the lock's message
	lockedAction('/studies/[id]/sessions/[sid]', 'submit', sessionA, 'researcherA', {
		form: { note: 'Submitting an approved session again', confirm: 'yes' }
	}),
	lockedAction('/studies/[id]/sessions/[sid]', 'approve', sessionA, 'piA', {
		form: { meaning: 'approved for analysis', password: 'momentry-demo-2026' }
	}),
	lockedAction('/studies/[id]/sessions/[sid]', 'return', sessionA, 'piA', {
		form: { comment: 'Returning an approved session', confirm: 'yes' }
	}),
	lockedAction('/studies/[id]/sessions/[sid]', 'code', sessionA, 'piA'),
	...exempt(reopening, '/studies/[id]/sessions/[sid]', 'reopen'),

	// study-level records: no session is changed
	{
		route: '/api/studies/[id]/mapping-presets',
		method: 'POST',
		exempt: 'a column-mapping preset belongs to the study; saving one changes no session, trial or run'
	},
	...exempt(notSession, '/studies/[id]/consent-forms', 'publish'),
	...exempt(notSession, '/studies/[id]/settings', 'default'),
	...exempt(notSession, '/studies/[id]/participants/new', 'default'),
	...exempt(notSession, '/studies/[id]/participants/import', 'check', 'import'),
	...exempt(newDraft, '/studies/[id]/participants/[pid]/sessions/new', 'default'),
	// the participant's record: approved runs keep the scaled model they recorded, so a correction changes none of them
	...exempt('participant record; approved runs keep the model they recorded', '/studies/[id]/participants/[pid]', 'length', 'research'),
	...exempt('personal data, apart from all results', '/studies/[id]/participants/[pid]', 'personal'),
	// consent: a withdrawal must always be possible, and the PI's keep/exclude decision on flagged results with it
	...exempt('consent invitation; no results change', '/studies/[id]/participants/[pid]/consent', 'invite', 'resend', 'remind'),
	...exempt(exclusion, '/studies/[id]/participants/[pid]/consent', 'decide'),
	...exempt("the participant's own consent", '/consent/[token]', 'consent', 'decline'),
	...exempt('a withdrawal is always possible', '/consent/withdraw/[token]', 'default'),
	// accounts and people
	...exempt(notSession, '/account', 'password'),
	...exempt(notSession, '/invitation/[token]', 'default'),
	...exempt(notSession, '/people/[id]', 'role', 'admin', 'deactivate', 'reactivate'),
	...exempt(
		'lab equipment; runs copy the plate geometry they used into their own record',
		'/lab/force-plates',
		'create',
		'update',
		'archive'
	),
	...exempt(notSession, '/people/invite', 'default'),
	...exempt(notSession, '/reset-password/[token]', 'default'),
	...exempt(notSession, '/signin', 'link', 'password'),
	...exempt(notSession, '/signin/forgot', 'default'),
	...exempt(notSession, '/signout', 'default')
];
