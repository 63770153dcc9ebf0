// Change a session's record and set-up while it is a draft or returned.
import { FormProblem } from '$lib/server/errors';
import { statusOf } from '$lib/server/http/edge';
import { fail, redirect } from '@sveltejs/kit';
import { editSession, editSessionForm, formValuesFrom } from '$lib/server/sessions/sessions';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => ({
	...(await editSessionForm(event, event.params.id, event.params.sid)),
	today: new Date().toISOString().slice(0, 10)
});

export const actions: Actions = {
	default: async (event) => {
		const form = await event.request.formData();
		try {
			await editSession(event, event.params.id, event.params.sid, form);
		} catch (err) {
			if (err instanceof FormProblem) return fail(statusOf(err), { values: formValuesFrom(form), errors: err.errors });
			throw err;
		}
		redirect(303, `/studies/${event.params.id}/sessions/${event.params.sid}?saved=1`);
	}
};
