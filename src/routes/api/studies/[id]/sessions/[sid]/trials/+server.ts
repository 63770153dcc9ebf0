// Trial upload: a streamed multipart body (one or several files); JSON answers per file, or for a plain form
// post without JavaScript a 303 back to the session page with the outcome in a short-lived cookie.
import { json, redirect } from '@sveltejs/kit';
import { callerOf, edge } from '$lib/server/http/edge';
import { receiveTrials } from '$lib/server/trials/uploads';
import { flashCookieName, encodeFlash } from '$lib/server/trials/upload-flash';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = (event) =>
	edge(event, async () => {
		const { studyId, sessionId, outcomes } = await receiveTrials(...callerOf(event), {
			studyId: event.params.id,
			sessionId: event.params.sid,
			body: event.request.body,
			contentType: event.request.headers.get('content-type') ?? ''
		});
		const accept = event.request.headers.get('accept') ?? '';
		// a browser's own form post asks for HTML first; the page's script asks for JSON
		if (/text\/html/.test(accept) && !/application\/json/.test(accept)) {
			const path = `/studies/${studyId}/sessions/${sessionId}`;
			event.cookies.set(flashCookieName, encodeFlash(outcomes), { path, httpOnly: true, sameSite: 'lax', maxAge: 300 });
			redirect(303, path);
		}
		if (outcomes.length === 1) return json({ ...outcomes[0], results: outcomes }, { status: outcomes[0].status });
		const statuses = new Set(outcomes.map((o) => o.status));
		// several files: one result each; the status is theirs when they agree, 207 (Multi-Status) when they differ
		return json({ results: outcomes }, { status: statuses.size === 1 ? outcomes[0].status : 207 });
	});
