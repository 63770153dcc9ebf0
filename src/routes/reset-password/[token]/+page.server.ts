// The page a password-reset link opens: a new password, after which every session of the account ends.
import { redirect } from '@sveltejs/kit';
import { contextOf, formEdge } from '$lib/server/http/edge';
import { resetLinkFor, resetPassword } from '$lib/server/people/manage';
import { LINK_REFUSED_MESSAGE } from '$lib/server/auth/tokens';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ params, setHeaders }) => {
	// the address holds a secret: keep the page out of every cache
	setHeaders({ 'cache-control': 'no-store' });
	const link = await resetLinkFor(params.token);
	if ('refused' in link) return { email: null, refusedMessage: LINK_REFUSED_MESSAGE };
	return { email: link.email, refusedMessage: null };
};

export const actions: Actions = {
	default: async (event) => {
		const input = Object.fromEntries(await event.request.formData());
		return formEdge(event, async () => {
			await resetPassword(contextOf(event), event.params.token, input);
			redirect(303, '/signin?done=password-reset');
		});
	}
};
