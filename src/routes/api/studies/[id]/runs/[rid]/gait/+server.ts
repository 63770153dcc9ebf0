// GET: a done run's ground reaction forces per plate (N and % body weight), CoP paths, contacts, gait events, cycles and
// spatiotemporal table (GaitAnswer; `gait: false` for a run without force data).
import { json } from '@sveltejs/kit';
import { callerOf, edge } from '$lib/server/http/edge';
import { loadGait } from '$lib/server/runs/gait-results';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) =>
	edge(event, async () => json(await loadGait(...callerOf(event), { studyId: event.params.id, runId: event.params.rid })));
