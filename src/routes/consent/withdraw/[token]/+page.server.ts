// The page a withdrawal link opens (no account needed): what withdrawing means, one confirmation, then it is recorded.
import { contextOf, edge, formEdge } from '$lib/server/http/edge';
import { LinkRefused, withdraw, withdrawPageFor } from '$lib/server/consent/workflow';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) =>
	edge(event, async () => {
		event.setHeaders({ 'cache-control': 'no-store' });
		// after the page's own form was sent, the action has already audited what happened
		const page = await withdrawPageFor(contextOf(event), event.params.token, event.request.method === 'GET');
		return 'refused' in page ? { page: null, refused: page } : { page, refused: null };
	});

export const actions: Actions = {
	default: (event) =>
		formEdge(
			event,
			async () => {
				const outcome = await withdraw(contextOf(event), event.params.token);
				return { done: { effect: outcome.effect, mailed: outcome.mailed, contact: outcome.contact } };
			},
			{ extra: (p) => ({ refused: p instanceof LinkRefused ? p.refused : null }) }
		)
};
