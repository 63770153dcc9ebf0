// One run's results: moment curves, summary per DOF and what produced them (options, model, raw file hash, software version).
import { redirect } from '@sveltejs/kit';
import { callerOf, edge } from '$lib/server/http/edge';
import { loadRunPage, retryRun } from '$lib/server/runs/runs';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) =>
	edge(event, async () => ({
		...(await loadRunPage(...callerOf(event), { studyId: event.params.id, runId: event.params.rid, query: event.url.searchParams })),
		perKg: event.url.searchParams.get('perKg') === '1'
	}));

export const actions: Actions = {
	/** A failed run back to the queue (same run row); then back to the session page at the trial's runs. */
	retry: (event) =>
		edge(event, async () => {
			const run = await retryRun(...callerOf(event), { studyId: event.params.id, runId: event.params.rid });
			const form = await event.request.formData().catch(() => new FormData());
			const sessionId = String(form.get('sessionId') ?? '');
			redirect(
				303,
				/^[0-9a-f-]{36}$/i.test(sessionId)
					? `/studies/${event.params.id}/sessions/${sessionId}#runs-${run.trialId}`
					: `/studies/${event.params.id}/runs/${run.id}`
			);
		})
};
