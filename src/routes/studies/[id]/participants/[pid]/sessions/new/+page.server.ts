// New session for a participant: the visit, the limbs and their bases, the table and loads; needs valid consent.
import { callerOf, edge, formEdge } from '$lib/server/http/edge';
import { redirect } from '@sveltejs/kit';
import { createSession, formValuesFrom, newSessionForm } from '$lib/server/sessions/sessions';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) =>
	edge(event, async () => ({
		...(await newSessionForm(...callerOf(event), { studyId: event.params.id, participantId: event.params.pid })),
		today: new Date().toISOString().slice(0, 10)
	}));

export const actions: Actions = {
	default: async (event) => {
		const form = await event.request.formData();
		return formEdge(
			event,
			async () => {
				const { id } = await createSession(...callerOf(event), { studyId: event.params.id, participantId: event.params.pid, form });
				redirect(303, `/studies/${event.params.id}/sessions/${id}?created=1`);
			},
			{ extra: { values: formValuesFrom(form) } }
		);
	}
};
