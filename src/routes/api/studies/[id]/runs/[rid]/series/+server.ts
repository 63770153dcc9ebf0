// GET ?quantity=moment&dof=right.knee.flexion&points=400: a done run's curves, optionally reduced for plotting (min/max per bucket).
import { json } from '@sveltejs/kit';
import { callerOf, edge } from '$lib/server/http/edge';
import { loadSeries } from '$lib/server/runs/runs';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) =>
	edge(event, async () =>
		json(await loadSeries(...callerOf(event), { studyId: event.params.id, runId: event.params.rid, query: event.url.searchParams }))
	);
