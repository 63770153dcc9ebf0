// GET: a run's cycle events. POST (JSON {times, source, rule} or a form with `times`): replaces them; 400 with
// messages per field, 409 on an approved session. A plain form post is sent back to the session page.
import { json, redirect } from '@sveltejs/kit';
import { FormProblem } from '$lib/server/errors';
import { callerOf, edge, statusOf } from '$lib/server/http/edge';
import { readRunEvents, saveRunEvents } from '$lib/server/review/review';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) =>
	edge(event, async () => json(await readRunEvents(...callerOf(event), { studyId: event.params.id, runId: event.params.rid })));

export const POST: RequestHandler = (event) => {
	const wantsHtml =
		(event.request.headers.get('accept') ?? '').includes('text/html') &&
		!(event.request.headers.get('content-type') ?? '').includes('json');
	return edge(event, async () => {
		try {
			const events = await saveRunEvents(...callerOf(event), { studyId: event.params.id, runId: event.params.rid, request: event.request });
			const back = event.url.searchParams.get('back');
			if (wantsHtml && back && back.startsWith(`/studies/${event.params.id}/`)) redirect(303, `${back}#review`);
			return json({ events });
		} catch (err) {
			if (!(err instanceof FormProblem) || err.kind !== 'invalid') throw err;
			// the events' field messages, one after another (as the form and scripts have always read them)
			const message = Object.values(err.errors).join('; ');
			if (wantsHtml)
				return new Response(`Events not saved: ${message}`, {
					status: statusOf(err),
					headers: { 'content-type': 'text/plain; charset=utf-8' }
				});
			return json({ message, errors: err.errors }, { status: statusOf(err) });
		}
	});
};
