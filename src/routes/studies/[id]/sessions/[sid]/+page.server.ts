// The session page: set-up summary, its trials with their runs, and the upload area (posting to the trials API).
import { callerOf, edge, formEdge, formValues } from '$lib/server/http/edge';
import { readSession } from '$lib/server/sessions/sessions';
import { decodeFlash, flashCookieName } from '$lib/server/trials/upload-flash';
import { uploadLimitText } from '$lib/server/trials/uploads';
import { latestMomentsBySession, listRunsForSession } from '$lib/server/runs/runs';
import { redirect } from '@sveltejs/kit';
import { sendSignatureCode, transition, workflowOf } from '$lib/server/sessions/workflow';
import type { FieldErrors } from '$lib/server/errors';
import type { Transition } from '$lib/types/sessions';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

export const load: PageServerLoad = (event) =>
	edge(event, async () => {
		const ref = { studyId: event.params.id, sessionId: event.params.sid };
		const data = await readSession(...callerOf(event), ref);
		const path = `/studies/${data.study.id}/sessions/${data.session.id}`;
		// the outcome of a plain form upload, shown once
		const flash = decodeFlash(event.cookies.get(flashCookieName));
		if (flash) event.cookies.delete(flashCookieName, { path });
		return {
			...data,
			runs: await listRunsForSession(data.session.id),
			moments: await latestMomentsBySession(data.session.id),
			flash,
			limitText: uploadLimitText(),
			created: event.url.searchParams.get('created') === '1',
			saved: event.url.searchParams.get('saved') === '1',
			// the review workflow block (SessionWorkflow.svelte)
			workflow: await workflowOf(...callerOf(event), ref),
			moved: event.url.searchParams.get('moved')
		};
	});

// ---- review workflow: submit, approve (signed), return, reopen, and the e-mailed signing code
/** A refused step comes back as { workflow: { step, errors, values } } (never a password or code). */
const refused = (step: Transition, values: FieldErrors) => ({
	extra: (p: { errors: FieldErrors }) => ({ workflow: { step, errors: p.errors, values } })
});

const step = (name: Transition) => async (event: RequestEvent) => {
	const form = await event.request.formData();
	return formEdge(
		event,
		async () => {
			const { to } = await transition(...callerOf(event), {
				studyId: event.params.id,
				sessionId: event.params.sid,
				step: name,
				form: Object.fromEntries(form)
			});
			redirect(303, `/studies/${event.params.id}/sessions/${event.params.sid}?moved=${to}#workflow`);
		},
		refused(name, formValues(form))
	);
};

export const actions: Actions = {
	submit: step('submit'),
	approve: step('approve'),
	return: step('return'),
	reopen: step('reopen'),
	code: (event) =>
		formEdge(
			event,
			async () => {
				const { expiresAt } = await sendSignatureCode(...callerOf(event), { studyId: event.params.id, sessionId: event.params.sid });
				return { workflow: { step: 'approve' as const, codeSent: expiresAt, errors: {} as FieldErrors, values: {} as FieldErrors } };
			},
			refused('approve', {})
		)
};
