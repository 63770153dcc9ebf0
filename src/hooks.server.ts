// Server hooks: sign-in (Auth.js), the signed-in person re-checked on every request, security headers, error references.
import type { Handle, HandleServerError } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { randomUUID } from 'node:crypto';
// Validates the published anthropometric tables at start-up: a broken table file stops the server with its name.
import '$lib/anthropometry/tables';
import { authHandle } from '$lib/server/auth';
import { loadActor } from '$lib/server/access/guard';
import { withRequestContext } from '$lib/server/http/request-context';
import { db } from '$lib/server/db/index';

// the connection pool and every model, set up once when the server starts (no connection is opened yet)
db();

const clientAddress: Handle = ({ event, resolve }) => {
	// Auth.js sees only the Request; pass it the client's address (never trust one the client sent).
	event.request.headers.delete('x-momentry-client-address');
	let ip: string | null = null;
	try {
		ip = event.getClientAddress();
		event.request.headers.set('x-momentry-client-address', ip);
	} catch {
		/* no address when prerendering */
	}
	return withRequestContext(ip, () => resolve(event));
};

const actor: Handle = async ({ event, resolve }) => {
	event.locals.actor = null;
	if (!event.url.pathname.startsWith('/api/health')) {
		try {
			const session = (await event.locals.auth()) as { userId?: string; sessionVersion?: number } | null;
			event.locals.actor = await loadActor(session?.userId, session?.sessionVersion);
		} catch (err) {
			// database unreachable: treat as signed out; pages that need data fail on their own with a clear page
			console.error('[auth] could not load the signed-in person:', (err as Error).message);
		}
	}
	return resolve(event);
};

const headers: Handle = async ({ event, resolve }) => {
	let response = await resolve(event);
	try {
		response.headers.set('x-content-type-options', 'nosniff');
	} catch {
		// Response.redirect() (as Auth.js returns it) has immutable headers: copy it first
		response = new Response(response.body, response);
		response.headers.set('x-content-type-options', 'nosniff');
	}
	response.headers.set('referrer-policy', 'same-origin');
	response.headers.set('x-frame-options', 'DENY');
	return gzipLargeJson(event.request, response);
};

/**
 * Large JSON answers (the review's full-resolution curves, the results API) are gzipped, streamed, when the client
 * accepts it: a 10-minute 26-DOF review answer goes from 26 MiB to about 11 MiB (npm run bench:review).
 */
export function gzipLargeJson(request: Request, response: Response, threshold = 32 * 1024): Response {
	const type = response.headers.get('content-type') ?? '';
	const length = Number(response.headers.get('content-length') ?? Infinity);
	if (!response.body || !/^application\/json\b/.test(type) || response.headers.has('content-encoding') || length < threshold)
		return response;
	if (!/\bgzip\b/.test(request.headers.get('accept-encoding') ?? '')) return response;
	const headers = new Headers(response.headers);
	headers.delete('content-length');
	headers.set('content-encoding', 'gzip');
	headers.append('vary', 'accept-encoding');
	const body = response.body.pipeThrough(new CompressionStream('gzip'));
	return new Response(body, { status: response.status, statusText: response.statusText, headers });
}

export const handle = sequence(headers, clientAddress, authHandle, actor);

export const handleError: HandleServerError = ({ error, event, status }) => {
	const reference = randomUUID().slice(0, 8);
	if (status >= 500) {
		console.error(`[${reference}] ${event.request.method} ${event.url.pathname}:`, error);
	}
	return {
		message: status === 404 ? 'This page does not exist.' : 'Something went wrong on our side.',
		reference
	};
};
