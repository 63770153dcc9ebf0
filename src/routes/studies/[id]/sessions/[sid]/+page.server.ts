// The session page: set-up summary, its trials with their runs, and the upload area (posting to the trials API).
import { FormProblem } from '$lib/server/errors';
import { statusOf } from '$lib/server/http/edge';
import { readSession } from '$lib/server/sessions/sessions';
import { decodeFlash, flashCookieName } from '$lib/server/trials/upload-flash';
import { uploadLimitText } from '$lib/server/trials/uploads';
import { latestMomentsBySession, listRunsForSession } from '$lib/server/runs/runs';
import { fail, redirect } from '@sveltejs/kit';
import { sendSignatureCode, transition, workflowOf, type Transition } from '$lib/server/sessions/workflow';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

export const load: PageServerLoad = async (event) => {
	const data = await readSession(event, event.params.id, event.params.sid);
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
		workflow: await workflowOf(event, data.study.id, data.session.id),
		moved: event.url.searchParams.get('moved')
	};
};

// ---- review workflow: submit, approve (signed), return, reopen, and the e-mailed signing code
const step = (name: Transition) => async (event: RequestEvent) => {
	const form = await event.request.formData();
	try {
		const { to } = await transition(event, event.params.id, event.params.sid, name, form);
		redirect(303, `/studies/${event.params.id}/sessions/${event.params.sid}?moved=${to}#workflow`);
	} catch (err) {
		if (err instanceof FormProblem) {
			// never echo a password or code back into the page
			const values = Object.fromEntries([...form.entries()].filter(([k]) => k !== 'password' && k !== 'code').map(([k, v]) => [k, String(v)]));
			return fail(statusOf(err), { workflow: { step: name, errors: err.errors, values } });
		}
		throw err;
	}
};

export const actions: Actions = {
	submit: step('submit'),
	approve: step('approve'),
	return: step('return'),
	reopen: step('reopen'),
	code: async (event) => {
		try {
			const { expiresAt } = await sendSignatureCode(event, event.params.id, event.params.sid);
			return { workflow: { step: 'approve' as const, codeSent: expiresAt, errors: {} as Record<string, string>, values: {} as Record<string, string> } };
		} catch (err) {
			if (err instanceof FormProblem) return fail(statusOf(err), { workflow: { step: 'approve' as const, errors: err.errors, values: {} as Record<string, string> } });
			throw err;
		}
	}
};
