// One trial: its runs, residual analysis on request, and the form action that starts a run (also used by the session page).
import { callerOf, edge, formEdge, formValues } from '$lib/server/http/edge';
import { redirect } from '@sveltejs/kit';
import { loadTrialPage, sessionOfTrial, startRun } from '$lib/server/runs/runs';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

const trialRef = (event: RequestEvent | Parameters<PageServerLoad>[0]) => ({ studyId: event.params.id, trialId: event.params.tid });

export const load: PageServerLoad = (event) =>
	edge(event, () => loadTrialPage(...callerOf(event), { ...trialRef(event), query: event.url.searchParams }));

/** Back to the session page the trial belongs to, at the trial's runs (or to this page when asked). */
async function back(event: RequestEvent, form: FormData): Promise<never> {
	const sid = await sessionOfTrial(event.params.id, event.params.tid);
	const here = `/studies/${event.params.id}/trials/${event.params.tid}`;
	redirect(303, form.get('back') === 'trial' || !sid ? here : `/studies/${event.params.id}/sessions/${sid}#runs-${event.params.tid}`);
}

export const actions: Actions = {
	start: async (event) => {
		const form = await event.request.formData();
		return formEdge(
			event,
			async () => {
				await startRun(...callerOf(event), { ...trialRef(event), options: form });
				return back(event, form);
			},
			{ values: formValues(form), extra: { trialId: event.params.tid } }
		);
	}
};
