// GET: a done run's summary per DOF (peaks with their times, range, mean, unit).
import { json } from '@sveltejs/kit';
import { callerOf, edge } from '$lib/server/http/edge';
import { loadSummary } from '$lib/server/runs/runs';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) =>
	edge(event, async () =>
		json(await loadSummary(...callerOf(event), { studyId: event.params.id, runId: event.params.rid, query: event.url.searchParams }))
	);
