// One run's results: moment curves, summary per DOF and what produced them (options, model, raw file hash, software
// version); for a done run with force data its ground reaction forces, CoP, contacts and gait results (GaitAnswer).
import { redirect } from '@sveltejs/kit';
import { contactFeetFromForm } from '$lib/components/gait/gait-plot';
import { FormProblem } from '$lib/server/errors';
import { callerOf, edge, formEdge, formValues } from '$lib/server/http/edge';
import { loadGait } from '$lib/server/runs/gait-results';
import { loadRunPage, readRun, retryRun, sessionOfTrial, startRun } from '$lib/server/runs/runs';
import { assertSessionUnlocked } from '$lib/server/sessions/lock';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) =>
	edge(event, async () => {
		const ref = { studyId: event.params.id, runId: event.params.rid };
		const page = await loadRunPage(...callerOf(event), { ...ref, query: event.url.searchParams });
		return {
			...page,
			perKg: event.url.searchParams.get('perKg') === '1',
			gait: page.run.state === 'done' ? await loadGait(...callerOf(event), ref) : null
		};
	});

export const actions: Actions = {
	/**
	 * "Re-run with these feet": a new run of the trial with this run's options plus contactFeet (the contacts' foot
	 * choices, foot.<plate>#<k> = auto | left | right | none) and useFlaggedContacts; then to the new run's page.
	 */
	rerunFeet: async (event) => {
		const form = await event.request.formData();
		return formEdge(
			event,
			async () => {
				const ref = { studyId: event.params.id, runId: event.params.rid };
				const run = await readRun(...callerOf(event), ref);
				// an approved session answers with the lock's message before anything about its contacts
				const sessionId = await sessionOfTrial(event.params.id, run.trialId);
				if (sessionId) await assertSessionUnlocked(sessionId);
				const gait = run.state === 'done' ? await loadGait(...callerOf(event), ref) : null;
				if (!gait?.gait) throw new FormProblem({ form: `Run ${run.number} has no foot contacts to re-run with.` });
				const feet = contactFeetFromForm(
					form.entries(),
					gait.contacts.map((c) => c.id)
				);
				if (!feet.ok) throw new FormProblem({ form: feet.problem });
				const options = {
					...run.options,
					contactFeet: feet.contactFeet,
					useFlaggedContacts: form.get('useFlaggedContacts') === 'on'
				};
				const started = await startRun(...callerOf(event), { studyId: event.params.id, trialId: run.trialId, options });
				redirect(303, `/studies/${event.params.id}/runs/${started.id}`);
			},
			{ values: formValues(form) }
		);
	},
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
