// POST: queues a failed run again (same run row); 409 when the run is not failed or consent is not valid.
import { json } from '@sveltejs/kit';
import { callerOf, edge } from '$lib/server/http/edge';
import { retryRun } from '$lib/server/runs/runs';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = (event) =>
	edge(event, async () => json({ run: await retryRun(...callerOf(event), { studyId: event.params.id, runId: event.params.rid }) }));
