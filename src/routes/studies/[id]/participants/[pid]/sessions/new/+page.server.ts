// New session for a participant: the visit, the limbs and their bases, the table and loads; needs valid consent.
import { createSession, newSessionForm } from '$lib/server/sessions/sessions';
import { sessionFormAction, sessionFormLoad } from '../../../../session-form.server';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) =>
	sessionFormLoad(event, (actor, ctx) => newSessionForm(actor, ctx, { studyId: event.params.id, participantId: event.params.pid }));

export const actions: Actions = {
	default: (event) =>
		sessionFormAction(event, async (actor, ctx, form) => {
			const { id } = await createSession(actor, ctx, { studyId: event.params.id, participantId: event.params.pid, form });
			return `/studies/${event.params.id}/sessions/${id}?created=1`;
		})
};
