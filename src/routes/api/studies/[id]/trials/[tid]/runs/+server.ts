// POST: starts a run of the trial with JSON options ({ cutoffHz, perChannelCutoffHz, fillGaps, gravity }); 201 with the run.
import { FormProblem } from '$lib/server/errors';
import { statusOf } from '$lib/server/http/edge';
import { json } from '@sveltejs/kit';
import { jsonBody, startRun } from '$lib/server/runs/runs';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	try {
		return json({ run: await startRun(event, event.params.id, event.params.tid, jsonBody(event)) }, { status: 201 });
	} catch (err) {
		if (err instanceof FormProblem) return json({ message: err.message, errors: err.errors }, { status: statusOf(err) });
		throw err;
	}
};
