// GET: residual analysis of every channel of the trial (residual against cutoff, noise line, suggested cutoff).
import { json } from '@sveltejs/kit';
import { loadResiduals } from '$lib/server/runs/runs';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => json(await loadResiduals(event, event.params.id, event.params.tid));
