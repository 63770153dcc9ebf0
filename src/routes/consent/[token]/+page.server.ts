// The page a consent link opens (no account needed: the single-use link is the proof): read, then agree or decline.
import { contextOf, edge, formEdge, formValues } from '$lib/server/http/edge';
import { consentPageFor, decide, LinkRefused, ReReadProblem } from '$lib/server/consent/workflow';
import type { Actions, PageServerLoad, RequestEvent } from './$types';

export const load: PageServerLoad = (event) =>
	edge(event, async () => {
		// the address holds a secret: keep the page out of every cache
		event.setHeaders({ 'cache-control': 'no-store' });
		// after the page's own form was sent, the action has already audited what happened
		const page = await consentPageFor(contextOf(event), event.params.token, event.request.method === 'GET');
		return 'refused' in page ? { page: null, refused: page } : { page, refused: null };
	});

async function act(event: RequestEvent, decision: 'consented' | 'declined') {
	const answers = formValues(await event.request.formData());
	const values = { fullName: answers.fullName ?? '', signedOn: answers.signedOn ?? '' };
	const ticked = Object.keys(answers).filter((k) => k.startsWith('confirm-') && answers[k] === 'yes');
	return formEdge(
		event,
		async () => {
			const outcome = await decide(contextOf(event), event.params.token, answers, decision);
			return { done: { decision: outcome.decision, mailed: outcome.mailed, contact: outcome.contact, formVersion: outcome.formVersion } };
		},
		{
			values,
			// a refused link shows why; a form version published meanwhile asks to read again (ticks cleared)
			extra: (p) => ({
				refused: p instanceof LinkRefused ? p.refused : null,
				ticked: p instanceof ReReadProblem ? [] : ticked,
				reRead: p instanceof ReReadProblem
			})
		}
	);
}

export const actions: Actions = {
	consent: (event) => act(event, 'consented'),
	decline: (event) => act(event, 'declined')
};
