// Adding a participant (PI, technician): research fields and personal data in one form; Momentry issues the code.
import { FormProblem } from '$lib/server/errors';
import { statusOf } from '$lib/server/http/edge';
import { fail, redirect } from '@sveltejs/kit';
import { createParticipant } from '$lib/server/participants/records';
import { guardStudy } from '$lib/server/studies/records';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { study } = await guardStudy(event, 'participant.create', event.params.id);
	return { study: { id: study.id, code: study.code, title: study.title } };
};

export const actions: Actions = {
	default: async (event) => {
		const form = await event.request.formData();
		let made: { id: string; code: string };
		try {
			made = await createParticipant(event, event.params.id, form);
		} catch (err) {
			if (err instanceof FormProblem) {
				return fail(statusOf(err), { values: Object.fromEntries([...form.entries()].map(([k, v]) => [k, String(v)])), errors: err.errors });
			}
			throw err;
		}
		redirect(303, `/studies/${event.params.id}/participants/${made.id}?added=${encodeURIComponent(made.code)}`);
	}
};
