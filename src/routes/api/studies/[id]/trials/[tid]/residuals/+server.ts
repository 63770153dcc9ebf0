// GET: residual analysis of every channel of the trial (residual against cutoff, noise line, suggested cutoff).
import { json } from '@sveltejs/kit';
import { callerOf, edge } from '$lib/server/http/edge';
import { loadResiduals } from '$lib/server/runs/runs';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) =>
	edge(event, async () =>
		json(await loadResiduals(...callerOf(event), { studyId: event.params.id, trialId: event.params.tid, query: event.url.searchParams }))
	);
