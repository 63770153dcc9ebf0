// Inviting a person (lab administrators): account if new, study roles, and an e-mailed single-use link.
import { redirect } from '@sveltejs/kit';
import { contextOf, formEdge, formValues, requireLab } from '$lib/server/http/edge';
import { invitePerson, listStudies, parseInvitation, ROLE_LABELS, STUDY_ROLES } from '$lib/server/people/manage';
import { TOKEN_LIFETIME_MS } from '$lib/server/auth/tokens';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = await requireLab(event, 'people.manage');
	return {
		studies: await listStudies(actor),
		roles: STUDY_ROLES,
		roleLabels: ROLE_LABELS,
		linkDays: TOKEN_LIFETIME_MS.invitation / 86_400_000
	};
};

export const actions: Actions = {
	default: async (event) => {
		const actor = await requireLab(event, 'people.manage');
		const form = await event.request.formData();
		return formEdge(
			event,
			async () => {
				const result = await invitePerson(actor, contextOf(event), parseInvitation(Object.fromEntries(form), await listStudies(actor)));
				redirect(303, `/people/${result.userId}?done=${result.created ? 'invited' : 'invited-again'}`);
			},
			{ values: formValues(form) }
		);
	}
};
