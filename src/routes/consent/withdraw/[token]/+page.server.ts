// The page a withdrawal link opens (no account needed): what withdrawing means, one confirmation, then it is recorded.
import { fail } from '@sveltejs/kit';
import { withdraw, withdrawPageFor } from '$lib/server/consent/workflow';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	event.setHeaders({ 'cache-control': 'no-store' });
	// after the page's own form was sent, the action has already audited what happened
	const page = await withdrawPageFor(event.params.token, event.getClientAddress(), event.request.method === 'GET');
	return 'refused' in page ? { page: null, refused: page } : { page, refused: null };
};

export const actions: Actions = {
	default: async (event) => {
		const outcome = await withdraw(event, event.params.token);
		if (!outcome.ok) return fail(410, { refused: outcome.refused });
		return { done: { effect: outcome.effect, mailed: outcome.mailed, contact: outcome.contact } };
	}
};
