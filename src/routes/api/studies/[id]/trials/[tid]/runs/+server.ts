// POST: starts a run of the trial with JSON options ({ cutoffHz, perChannelCutoffHz, fillGaps, gravity }); 201 with the run.
import { json } from '@sveltejs/kit';
import { jsonBody, startRun } from '$lib/server/runs/runs';
import { FormProblem } from '$lib/server/studies/records';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async (event) => {
	try {
		return json({ run: await startRun(event, event.params.id, event.params.tid, jsonBody(event)) }, { status: 201 });
	} catch (err) {
		if (err instanceof FormProblem) return json({ message: err.message, errors: err.errors }, { status: err.status });
		throw err;
	}
};
