// Change a session's record and set-up while it is a draft or returned.
import { editSession, editSessionForm } from '$lib/server/sessions/sessions';
import { sessionFormAction, sessionFormLoad } from '../../../session-form.server';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) =>
	sessionFormLoad(event, (actor, ctx) => editSessionForm(actor, ctx, { studyId: event.params.id, sessionId: event.params.sid }));

export const actions: Actions = {
	default: (event) =>
		sessionFormAction(event, async (actor, ctx, form) => {
			await editSession(actor, ctx, { studyId: event.params.id, sessionId: event.params.sid, form });
			return `/studies/${event.params.id}/sessions/${event.params.sid}?saved=1`;
		})
};
