// GET ?quantity=moment&dof=right.knee.flexion&points=400: a done run's curves, optionally reduced for plotting (min/max per bucket).
import { json } from '@sveltejs/kit';
import { loadSeries } from '$lib/server/runs/runs';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => json(await loadSeries(event, event.params.id, event.params.rid));
