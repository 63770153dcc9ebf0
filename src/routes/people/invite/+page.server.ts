// Inviting a person (lab administrators): account if new, study roles, and an e-mailed single-use link.
import { FormProblem } from '$lib/server/errors';
import { contextOf, statusOf } from '$lib/server/http/edge';
import { fail, redirect } from '@sveltejs/kit';
import { requireLab } from '$lib/server/http/edge';
import { invitePerson, listStudies, parseInvitation, ROLE_LABELS, STUDY_ROLES } from '$lib/server/people/manage';
import { TOKEN_LIFETIME_MS } from '$lib/server/auth/tokens';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = await requireLab(event, 'people.manage');
	return { studies: await listStudies(actor), roles: STUDY_ROLES, roleLabels: ROLE_LABELS, linkDays: TOKEN_LIFETIME_MS.invitation / 86_400_000 };
};

export const actions: Actions = {
	default: async (event) => {
		const actor = await requireLab(event, 'people.manage');
		const form = await event.request.formData();
		const values = Object.fromEntries([...form.entries()].map(([k, v]) => [k, String(v)]));
		let result: { userId: string; created: boolean };
		try {
			result = await invitePerson(actor, contextOf(event), parseInvitation(form, await listStudies(actor)));
		} catch (err) {
			if (err instanceof FormProblem) return fail(statusOf(err), { values, errors: err.errors });
			throw err;
		}
		redirect(303, `/people/${result.userId}?done=${result.created ? 'invited' : 'invited-again'}`);
	}
};
