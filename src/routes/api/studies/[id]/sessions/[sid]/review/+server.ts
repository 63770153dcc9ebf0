// GET ?quantity=moment|moment_per_kg|angle|power&points=2000: the session's done runs (excluded ones left out) with
// every sample (6 significant digits) for the read-out and the indices of the points to draw.
import { json } from '@sveltejs/kit';
import { loadSessionReview } from '$lib/server/review/review';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => json(await loadSessionReview(event, event.params.id, event.params.sid), { headers: { 'cache-control': 'no-store' } });
