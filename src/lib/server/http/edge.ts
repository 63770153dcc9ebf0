// The one HTTP edge: turns a request into (actor, ctx) for the services, and the services' domain errors into
// status codes, the sign-in redirect and form failures. Routes and form actions go through it; nothing else under
// src/lib/server imports SvelteKit (but the Auth.js glue).
import { error, fail, isHttpError, isRedirect, json, redirect, type ActionFailure, type RequestEvent } from '@sveltejs/kit';
import { DomainError, FormProblem, type DomainErrorKind, type FieldErrors } from '../errors';
import { guardLab, guardStudyAction, studyFor, type Actor, type LabAction, type StudyAction } from '../access/guard';
import type { RequestContext } from '../access/context';

export const STATUS: Record<DomainErrorKind, 400 | 401 | 403 | 404 | 409 | 410 | 413 | 415 | 422 | 429 | 502 | 503> = {
	invalid: 400,
	unauthenticated: 401,
	forbidden: 403,
	'not-found': 404,
	conflict: 409,
	gone: 410,
	'too-large': 413,
	unsupported: 415,
	unprocessable: 422,
	'rate-limited': 429,
	upstream: 502,
	unavailable: 503
};

/** The status code of a domain error. */
export const statusOf = (err: DomainError) => STATUS[err.kind];

/** The request's context for services and the audit log. */
export function contextOf(event: RequestEvent): RequestContext {
	let ipAddress: string | null = null;
	try {
		ipAddress = event.getClientAddress();
	} catch {
		/* no address when prerendering */
	}
	return { ipAddress, origin: event.url.origin, method: event.request.method, path: event.url.pathname };
}

/** The signed-in person or null, as the hooks loaded them for this request. */
export const actorOf = (event: RequestEvent): Actor | null => event.locals.actor;

/** Both at once, for a service call: `service(...callerOf(event), input)`. */
export const callerOf = (event: RequestEvent): [Actor | null, RequestContext] => [actorOf(event), contextOf(event)];

/** Throws the HTTP form of a domain error: pages redirect to sign-in when nobody is signed in, the API answers 401. */
export function toHttp(event: RequestEvent, err: unknown): never {
	if (!(err instanceof DomainError)) throw err;
	if (err.kind === 'unauthenticated' && !event.url.pathname.startsWith('/api/'))
		redirect(303, `/signin?next=${encodeURIComponent(event.url.pathname + event.url.search)}`);
	error(STATUS[err.kind], err.message);
}

/** Runs a service call for a load or a JSON handler, mapping domain errors to HTTP errors. */
export async function edge<T>(event: RequestEvent, work: () => Promise<T> | T): Promise<T> {
	try {
		return await work();
	} catch (err) {
		if (isHttpError(err) || isRedirect(err)) throw err;
		toHttp(event, err);
	}
}

/**
 * Runs a JSON handler whose service refuses input with a FormProblem: that comes back as JSON
 * { message, errors } with the problem's status, so a script can show each field's message; other domain
 * errors become HTTP errors as in edge().
 */
export async function jsonEdge(event: RequestEvent, work: () => Promise<Response> | Response): Promise<Response> {
	try {
		return await work();
	} catch (err) {
		if (isHttpError(err) || isRedirect(err)) throw err;
		if (err instanceof FormProblem) return json({ message: err.message, errors: err.errors }, { status: STATUS[err.kind] });
		toHttp(event, err);
	}
}

/**
 * Runs a form action: a FormProblem comes back to the page as fail(status, { errors, values, ...extra }) so the
 * form shows each field's message and keeps what was typed (minus secrets); other domain errors become HTTP errors.
 * `extra` may be a function of the problem, for pages that show more than field messages (e.g. a checked file).
 */
export async function formEdge<T, X extends Record<string, unknown> = Record<string, unknown>>(
	event: RequestEvent,
	work: () => Promise<T> | T,
	opts: { values?: FieldErrors; extra?: X | ((problem: FormProblem) => X) } = {}
): Promise<T | ActionFailure<{ errors: FieldErrors; values: FieldErrors } & X>> {
	try {
		return await work();
	} catch (err) {
		if (isHttpError(err) || isRedirect(err)) throw err;
		if (err instanceof FormProblem) {
			const extra = typeof opts.extra === 'function' ? opts.extra(err) : opts.extra;
			return fail(STATUS[err.kind], { errors: err.errors, values: opts.values ?? {}, ...(extra as X) });
		}
		toHttp(event, err);
	}
}

/** What a form posted, as strings, without passwords and codes (never echoed back into a page). */
export function formValues(
	form: FormData,
	secret: readonly string[] = ['password', 'code', 'currentPassword', 'newPassword']
): FieldErrors {
	const out: FieldErrors = {};
	for (const [k, v] of form.entries()) if (!secret.includes(k) && typeof v === 'string') out[k] = v;
	return out;
}

/** Requires a signed-in person: pages redirect to sign-in, API routes answer 401. */
export function requireActor(event: RequestEvent): Actor {
	const actor = actorOf(event);
	if (actor) return actor;
	if (event.url.pathname.startsWith('/api/')) error(401, 'Sign in first.');
	redirect(303, `/signin?next=${encodeURIComponent(event.url.pathname + event.url.search)}`);
}

/** A lab-wide action's guard for a route (administrators only). */
export const requireLab = (event: RequestEvent, action: LabAction): Promise<Actor> =>
	edge(event, () => guardLab(actorOf(event), contextOf(event), action));

/** A study action's guard for a route: 404 for non-members, 403 for a role without the permission. */
export const requireStudy = (event: RequestEvent, action: StudyAction, studyId: string | null | undefined): Promise<Actor> =>
	edge(event, () => guardStudyAction(actorOf(event), contextOf(event), action, studyId));

/** A study action's guard for a route, with the study the URL names loaded (404 for a malformed or unknown id). */
export const requireStudyRecord = (event: RequestEvent, action: StudyAction, rawStudyId: string | null | undefined) =>
	edge(event, () => studyFor(actorOf(event), contextOf(event), action, rawStudyId));
