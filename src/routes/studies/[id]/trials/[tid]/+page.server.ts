// One trial: its runs, residual analysis on request, and the form action that starts a run (also used by the session page).
import { FormProblem } from '$lib/server/errors';
import { statusOf } from '$lib/server/http/edge';
import { fail, redirect } from '@sveltejs/kit';
import { loadTrialPage, sessionOfTrial, startRun } from '$lib/server/runs/runs';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

export const load: PageServerLoad = async (event) => loadTrialPage(event, event.params.id, event.params.tid);

/** Back to the session page the trial belongs to, at the trial's runs (or to this page when asked). */
async function back(event: RequestEvent, form: FormData): Promise<never> {
	const sid = await sessionOfTrial(event.params.id, event.params.tid);
	const here = `/studies/${event.params.id}/trials/${event.params.tid}`;
	redirect(303, form.get('back') === 'trial' || !sid ? here : `/studies/${event.params.id}/sessions/${sid}#runs-${event.params.tid}`);
}

export const actions: Actions = {
	start: async (event) => {
		const form = await event.request.formData();
		try {
			await startRun(event, event.params.id, event.params.tid, form);
		} catch (err) {
			if (err instanceof FormProblem) return fail(statusOf(err), { trialId: event.params.tid, values: Object.fromEntries([...form.entries()].map(([k, v]) => [k, String(v)])), errors: err.errors });
			throw err;
		}
		return back(event, form);
	}
};
