// GET: one run's state and progress (polled by the session page while it is queued or running).
import { json } from '@sveltejs/kit';
import { callerOf, edge } from '$lib/server/http/edge';
import { readRun } from '$lib/server/runs/runs';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) =>
	edge(event, async () =>
		json(
			{ run: await readRun(...callerOf(event), { studyId: event.params.id, runId: event.params.rid }) },
			{ headers: { 'cache-control': 'no-store' } }
		)
	);
