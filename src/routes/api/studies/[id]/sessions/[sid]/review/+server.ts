// GET ?quantity=moment|moment_per_kg|angle|power&points=2000: the session's done runs (excluded ones left out) with
// every sample (6 significant digits) for the read-out and the indices of the points to draw.
import { json } from '@sveltejs/kit';
import { callerOf, edge } from '$lib/server/http/edge';
import { loadSessionReview } from '$lib/server/review/review';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) =>
	edge(event, async () =>
		json(
			await loadSessionReview(...callerOf(event), { studyId: event.params.id, sessionId: event.params.sid, query: event.url.searchParams }),
			{ headers: { 'cache-control': 'no-store' } }
		)
	);
