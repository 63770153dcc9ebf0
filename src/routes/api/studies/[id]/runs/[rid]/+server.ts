// GET: one run's state and progress (polled by the session page while it is queued or running).
import { json } from '@sveltejs/kit';
import { readRun } from '$lib/server/runs/runs';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => json({ run: await readRun(event, event.params.id, event.params.rid) }, { headers: { 'cache-control': 'no-store' } });
