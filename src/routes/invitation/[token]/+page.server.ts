// Accepting an invitation (no sign-in needed: the single-use link is the proof): name and an optional password.
import { redirect } from '@sveltejs/kit';
import { contextOf, formEdge } from '$lib/server/http/edge';
import { acceptInvitation, invitationFor } from '$lib/server/people/manage';
import { LINK_REFUSED_MESSAGE } from '$lib/server/auth/tokens';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ params, setHeaders }) => {
	// the address holds a secret: keep the page out of every cache
	setHeaders({ 'cache-control': 'no-store' });
	const invitation = await invitationFor(params.token);
	if ('refused' in invitation) return { invitation: null, refusedMessage: LINK_REFUSED_MESSAGE };
	return { invitation, refusedMessage: null };
};

export const actions: Actions = {
	default: async (event) => {
		const input = Object.fromEntries(await event.request.formData());
		return formEdge(
			event,
			async () => {
				const { passwordSet } = await acceptInvitation(contextOf(event), event.params.token, input);
				redirect(303, `/signin?done=${passwordSet ? 'invitation-password' : 'invitation'}`);
			},
			{ values: { name: String(input.name ?? '') } }
		);
	}
};
