// Change a session's record and set-up while it is a draft or returned.
import { callerOf, edge, formEdge } from '$lib/server/http/edge';
import { redirect } from '@sveltejs/kit';
import { editSession, editSessionForm, formValuesFrom } from '$lib/server/sessions/sessions';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) =>
	edge(event, async () => ({
		...(await editSessionForm(...callerOf(event), { studyId: event.params.id, sessionId: event.params.sid })),
		today: new Date().toISOString().slice(0, 10)
	}));

export const actions: Actions = {
	default: async (event) => {
		const form = await event.request.formData();
		return formEdge(
			event,
			async () => {
				await editSession(...callerOf(event), { studyId: event.params.id, sessionId: event.params.sid, form });
				redirect(303, `/studies/${event.params.id}/sessions/${event.params.sid}?saved=1`);
			},
			{ extra: { values: formValuesFrom(form) } }
		);
	}
};
