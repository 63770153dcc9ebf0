// The page a consent link opens (no account needed: the single-use link is the proof): read, then agree or decline.
import { FormProblem } from '$lib/server/errors';
import { statusOf } from '$lib/server/http/edge';
import { fail } from '@sveltejs/kit';
import { consentPageFor, decide, ReReadProblem } from '$lib/server/consent/workflow';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	// the address holds a secret: keep the page out of every cache
	event.setHeaders({ 'cache-control': 'no-store' });
	// after the page's own form was sent, the action has already audited what happened
	const page = await consentPageFor(event.params.token, event.getClientAddress(), event.request.method === 'GET');
	return 'refused' in page ? { page: null, refused: page } : { page, refused: null };
};

async function act(event: Parameters<Actions[string]>[0], decision: 'consented' | 'declined') {
	const form = await event.request.formData();
	const values = { fullName: String(form.get('fullName') ?? ''), signedOn: String(form.get('signedOn') ?? '') };
	const ticked = [...form.keys()].filter((k) => k.startsWith('confirm-') && form.get(k) === 'yes');
	try {
		const outcome = await decide(event, event.params.token, form, decision);
		if (!outcome.ok) return fail(410, { refused: outcome.refused, errors: {} as Record<string, string>, values, ticked, reRead: false });
		return { done: { decision: outcome.decision, mailed: outcome.mailed, contact: outcome.contact, formVersion: outcome.formVersion } };
	} catch (err) {
		if (err instanceof FormProblem) return fail(statusOf(err), { refused: null, errors: err.errors, values, ticked: err instanceof ReReadProblem ? [] : ticked, reRead: err instanceof ReReadProblem });
		throw err;
	}
}

export const actions: Actions = {
	consent: (event) => act(event, 'consented'),
	decline: (event) => act(event, 'declined')
};
