// POST: starts a run of the trial with JSON options ({ cutoffHz, perChannelCutoffHz, fillGaps, gravity }); 201 with the run.
import { json } from '@sveltejs/kit';
import { callerOf, jsonEdge } from '$lib/server/http/edge';
import { jsonBody, startRun } from '$lib/server/runs/runs';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = (event) =>
	jsonEdge(event, async () =>
		json(
			{
				run: await startRun(...callerOf(event), { studyId: event.params.id, trialId: event.params.tid, options: jsonBody(event.request) })
			},
			{ status: 201 }
		)
	);
