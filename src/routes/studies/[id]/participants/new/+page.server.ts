// Adding a participant (PI, technician): research fields and personal data in one form; Momentry issues the code.
import { redirect } from '@sveltejs/kit';
import { callerOf, formEdge, formValues, requireStudyRecord } from '$lib/server/http/edge';
import { createParticipant } from '$lib/server/participants/records';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { study } = await requireStudyRecord(event, 'participant.create', event.params.id);
	return { study: { id: study.id, code: study.code, title: study.title } };
};

export const actions: Actions = {
	default: async (event) => {
		const values = formValues(await event.request.formData());
		return formEdge(
			event,
			async () => {
				const made = await createParticipant(...callerOf(event), event.params.id, values);
				redirect(303, `/studies/${event.params.id}/participants/${made.id}?added=${encodeURIComponent(made.code)}`);
			},
			{ values }
		);
	}
};
