// Every mutating handler in src/routes (POST/PUT/PATCH/DELETE endpoints, every form action) and what it does when
// its session is approved: refused with the lock's message, refused because of the session's state, or exempt
// with the reason. tests/integration/lock.test.ts fails for a mutating handler that has no entry here.
import type { ParamRef } from './access-matrix';
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

const A = { id: 'studyA' } as const;
const notSession = 'acts on no session, trial or run';

export const LOCK_MATRIX: LockEntry[] = [
	// the session, its trials and runs: refused once approved
	{
		route: '/api/studies/[id]/sessions/[sid]/trials',
		method: 'POST',
		params: { ...A, sid: 'sessionA' },
		as: 'technicianA',
		body: { upload: true },
		refuses: 'locked'
	},
	{
		route: '/api/studies/[id]/trials/[tid]/runs',
		method: 'POST',
		params: { ...A, tid: 'trialA' },
		as: 'researcherA',
		body: { json: { cutoffHz: 6 } },
		refuses: 'locked'
	},
	{ route: '/api/studies/[id]/runs/[rid]/retry', method: 'POST', params: { ...A, rid: 'runA' }, as: 'technicianA', refuses: 'locked' },
	{
		route: '/studies/[id]/trials/[tid]',
		method: 'POST',
		action: 'start',
		params: { ...A, tid: 'trialA' },
		as: 'technicianA',
		body: { form: { filter: 'lowpass', cutoffHz: '6' } },
		refuses: 'locked'
	},
	{ route: '/studies/[id]/runs/[rid]', method: 'POST', action: 'retry', params: { ...A, rid: 'runA' }, as: 'piA', refuses: 'locked' },
	{
		route: '/studies/[id]/sessions/[sid]/edit',
		method: 'POST',
		action: 'default',
		params: { ...A, sid: 'sessionA' },
		as: 'technicianA',
		body: { form: { operator: 'x', task: 'y' } },
		refuses: 'locked'
	},
	// review data: a run's cycle events
	{
		route: '/api/studies/[id]/runs/[rid]/events',
		method: 'POST',
		params: { ...A, rid: 'runA' },
		as: 'researcherA',
		body: { json: { times: [0.5, 1] } },
		refuses: 'locked'
	},

	// the review workflow: on an approved session every step but reopening answers with the lock's message
	{
		route: '/studies/[id]/sessions/[sid]',
		method: 'POST',
		action: 'submit',
		params: { ...A, sid: 'sessionA' },
		as: 'researcherA',
		body: { form: { note: 'Submitting an approved session again', confirm: 'yes' } },
		refuses: 'locked'
	},
	{
		route: '/studies/[id]/sessions/[sid]',
		method: 'POST',
		action: 'approve',
		params: { ...A, sid: 'sessionA' },
		as: 'piA',
		body: { form: { meaning: 'approved for analysis', password: 'momentry-demo-2026' } },
		refuses: 'locked'
	},
	{
		route: '/studies/[id]/sessions/[sid]',
		method: 'POST',
		action: 'return',
		params: { ...A, sid: 'sessionA' },
		as: 'piA',
		body: { form: { comment: 'Returning an approved session', confirm: 'yes' } },
		refuses: 'locked'
	},
	{
		route: '/studies/[id]/sessions/[sid]',
		method: 'POST',
		action: 'code',
		params: { ...A, sid: 'sessionA' },
		as: 'piA',
		refuses: 'locked'
	},
	{
		route: '/studies/[id]/sessions/[sid]',
		method: 'POST',
		action: 'reopen',
		exempt: 'the one way out of the lock: the PI reopens an approved session, giving a reason (workflow.test.ts)'
	},

	// study-level records: no session is changed
	{
		route: '/api/studies/[id]/mapping-presets',
		method: 'POST',
		exempt: 'a column-mapping preset belongs to the study; saving one changes no session, trial or run'
	},
	{ route: '/studies/[id]/consent-forms', method: 'POST', action: 'publish', exempt: notSession },
	{ route: '/studies/[id]/settings', method: 'POST', action: 'default', exempt: notSession },
	{ route: '/studies/[id]/participants/new', method: 'POST', action: 'default', exempt: notSession },
	{ route: '/studies/[id]/participants/import', method: 'POST', action: 'check', exempt: notSession },
	{ route: '/studies/[id]/participants/import', method: 'POST', action: 'import', exempt: notSession },
	{
		route: '/studies/[id]/participants/[pid]/sessions/new',
		method: 'POST',
		action: 'default',
		exempt: 'creates a new draft session; an approved session of the same participant is not touched'
	},
	// the participant's record: approved runs keep the scaled model they recorded, so a correction changes none of them
	{
		route: '/studies/[id]/participants/[pid]',
		method: 'POST',
		action: 'length',
		exempt: 'participant record; approved runs keep the model they recorded'
	},
	{
		route: '/studies/[id]/participants/[pid]',
		method: 'POST',
		action: 'research',
		exempt: 'participant record; approved runs keep the model they recorded'
	},
	{ route: '/studies/[id]/participants/[pid]', method: 'POST', action: 'personal', exempt: 'personal data, apart from all results' },
	// consent: a withdrawal must always be possible, and the PI's keep/exclude decision on flagged results with it
	{ route: '/studies/[id]/participants/[pid]/consent', method: 'POST', action: 'invite', exempt: 'consent invitation; no results change' },
	{ route: '/studies/[id]/participants/[pid]/consent', method: 'POST', action: 'resend', exempt: 'consent invitation; no results change' },
	{ route: '/studies/[id]/participants/[pid]/consent', method: 'POST', action: 'remind', exempt: 'consent invitation; no results change' },
	{
		route: '/studies/[id]/participants/[pid]/consent',
		method: 'POST',
		action: 'decide',
		exempt: 'after a withdrawal the PI must be able to exclude results, locked or not (the ethics rule comes first)'
	},
	{ route: '/consent/[token]', method: 'POST', action: 'consent', exempt: "the participant's own consent" },
	{ route: '/consent/[token]', method: 'POST', action: 'decline', exempt: "the participant's own consent" },
	{ route: '/consent/withdraw/[token]', method: 'POST', action: 'default', exempt: 'a withdrawal is always possible' },
	// accounts and people
	{ route: '/account', method: 'POST', action: 'password', exempt: notSession },
	{ route: '/invitation/[token]', method: 'POST', action: 'default', exempt: notSession },
	{ route: '/people/[id]', method: 'POST', action: 'role', exempt: notSession },
	{ route: '/people/[id]', method: 'POST', action: 'admin', exempt: notSession },
	{ route: '/people/[id]', method: 'POST', action: 'deactivate', exempt: notSession },
	{ route: '/people/[id]', method: 'POST', action: 'reactivate', exempt: notSession },
	{ route: '/people/invite', method: 'POST', action: 'default', exempt: notSession },
	{ route: '/reset-password/[token]', method: 'POST', action: 'default', exempt: notSession },
	{ route: '/signin', method: 'POST', action: 'link', exempt: notSession },
	{ route: '/signin', method: 'POST', action: 'password', exempt: notSession },
	{ route: '/signin/forgot', method: 'POST', action: 'default', exempt: notSession },
	{ route: '/signout', method: 'POST', action: 'default', exempt: notSession }
];
