// GET: a run's cycle events. POST (JSON {times, source, rule} or a form with `times`): replaces them; 400 with
// messages per field, 409 on an approved session. A plain form post is sent back to the session page.
import { json, redirect } from '@sveltejs/kit';
import { EventsProblem, readRunEvents, saveRunEvents } from '$lib/server/review/review';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => json(await readRunEvents(event, event.params.id, event.params.rid));

export const POST: RequestHandler = async (event) => {
	const wantsHtml = (event.request.headers.get('accept') ?? '').includes('text/html') && !(event.request.headers.get('content-type') ?? '').includes('json');
	try {
		const events = await saveRunEvents(event, event.params.id, event.params.rid);
		const back = event.url.searchParams.get('back');
		if (wantsHtml && back && back.startsWith(`/studies/${event.params.id}/`)) redirect(303, `${back}#review`);
		return json({ events });
	} catch (err) {
		if (err instanceof EventsProblem) {
			if (wantsHtml) return new Response(`Events not saved: ${err.message}`, { status: 400, headers: { 'content-type': 'text/plain; charset=utf-8' } });
			return json({ message: err.message, errors: err.errors }, { status: 400 });
		}
		throw err;
	}
};
