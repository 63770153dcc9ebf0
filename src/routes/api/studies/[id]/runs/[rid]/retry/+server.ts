// POST: queues a failed run again (same run row); 409 when the run is not failed or consent is not valid.
import { json } from '@sveltejs/kit';
import { retryRun } from '$lib/server/runs/runs';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => json({ run: await retryRun(event, event.params.id, event.params.rid) });
