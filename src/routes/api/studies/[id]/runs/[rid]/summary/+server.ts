// GET: a done run's summary per DOF (peaks with their times, range, mean, unit).
import { json } from '@sveltejs/kit';
import { loadSummary } from '$lib/server/runs/runs';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => json(await loadSummary(event, event.params.id, event.params.rid));
