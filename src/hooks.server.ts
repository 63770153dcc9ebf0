// Server hooks: security headers on every response, and unexpected errors logged with a reference a person can quote.
import type { Handle, HandleServerError } from '@sveltejs/kit';
import { randomUUID } from 'node:crypto';
// Validates the published anthropometric tables at start-up: a broken table file stops the server with its name.
import '$lib/anthropometry/tables';

export const handle: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	response.headers.set('x-content-type-options', 'nosniff');
	response.headers.set('referrer-policy', 'same-origin');
	response.headers.set('x-frame-options', 'DENY');
	return response;
};

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
