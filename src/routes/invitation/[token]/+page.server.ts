// Accepting an invitation (no sign-in needed: the single-use link is the proof): name and an optional password.
import { FormProblem } from '$lib/server/errors';
import { contextOf, statusOf } from '$lib/server/http/edge';
import { fail, redirect } from '@sveltejs/kit';
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
		const form = await event.request.formData();
		const values = { name: String(form.get('name') ?? '') };
		let outcome: Awaited<ReturnType<typeof acceptInvitation>>;
		try {
			outcome = await acceptInvitation(contextOf(event), event.params.token, form);
		} catch (err) {
			if (err instanceof FormProblem) return fail(statusOf(err), { values, errors: err.errors });
			throw err;
		}
		if ('refused' in outcome) return fail(410, { values, errors: { form: LINK_REFUSED_MESSAGE } as Record<string, string> });
		redirect(303, `/signin?done=${outcome.passwordSet ? 'invitation-password' : 'invitation'}`);
	}
};
