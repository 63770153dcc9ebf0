// New session for a participant: the visit, the limbs and their bases, the table and loads; needs valid consent.
import { FormProblem } from '$lib/server/errors';
import { statusOf } from '$lib/server/http/edge';
import { fail, redirect } from '@sveltejs/kit';
import { createSession, formValuesFrom, newSessionForm } from '$lib/server/sessions/sessions';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => ({
	...(await newSessionForm(event, event.params.id, event.params.pid)),
	today: new Date().toISOString().slice(0, 10)
});

export const actions: Actions = {
	default: async (event) => {
		const form = await event.request.formData();
		let id: string;
		try {
			({ id } = await createSession(event, event.params.id, event.params.pid, form));
		} catch (err) {
			if (err instanceof FormProblem) return fail(statusOf(err), { values: formValuesFrom(form), errors: err.errors });
			throw err;
		}
		redirect(303, `/studies/${event.params.id}/sessions/${id}?created=1`);
	}
};
