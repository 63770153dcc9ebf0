// The page a password-reset link opens: a new password, after which every session of the account ends.
import { FormProblem } from '$lib/server/errors';
import { contextOf, statusOf } from '$lib/server/http/edge';
import { fail, redirect } from '@sveltejs/kit';
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
		const form = await event.request.formData();
		let outcome: Awaited<ReturnType<typeof resetPassword>>;
		try {
			outcome = await resetPassword(contextOf(event), event.params.token, form);
		} catch (err) {
			if (err instanceof FormProblem) return fail(statusOf(err), { errors: err.errors });
			throw err;
		}
		if ('refused' in outcome) return fail(410, { errors: { form: LINK_REFUSED_MESSAGE } as Record<string, string> });
		redirect(303, '/signin?done=password-reset');
	}
};
