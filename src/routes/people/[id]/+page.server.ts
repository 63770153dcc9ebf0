// One person (lab administrators): study roles, the lab administrator flag, deactivation and reactivation.
import { redirect, type RequestEvent } from '@sveltejs/kit';
import { FormProblem } from '$lib/server/errors';
import type { Actor } from '$lib/server/access/guard';
import type { RequestContext } from '$lib/server/access/context';
import { contextOf, edge, formEdge, requireLab } from '$lib/server/http/edge';
import {
	deactivatePerson,
	getPerson,
	listStudies,
	parseRole,
	reactivatePerson,
	ROLE_LABELS,
	setLabAdmin,
	setStudyRole,
	STUDY_ROLES,
	type FormInput
} from '$lib/server/people/manage';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = await requireLab(event, 'people.manage');
	const person = await edge(event, () => getPerson(actor, event.params.id));
	const confirm = event.url.searchParams.get('confirm');
	return {
		person,
		studies: await listStudies(actor),
		roles: STUDY_ROLES,
		roleLabels: ROLE_LABELS,
		isSelf: person.id === actor.id,
		confirm: confirm === 'deactivate' || confirm === 'reactivate' ? confirm : null,
		done: event.url.searchParams.get('done')
	};
};

/** Runs one change on the person in the URL: an unknown person is a 404, a refused change comes back to the page. */
async function change<T>(event: RequestEvent<{ id: string }>, work: (actor: Actor, ctx: RequestContext, input: FormInput) => Promise<T>) {
	const actor = await requireLab(event, 'people.manage');
	await edge(event, () => getPerson(actor, event.params.id));
	const input = Object.fromEntries(await event.request.formData());
	return formEdge(event, () => work(actor, contextOf(event), input));
}

/** Deactivation and reactivation: confirmed on a panel, then the page again with a note of what was done. */
const confirmed = (what: 'deactivate' | 'reactivate', service: typeof deactivatePerson) => (event: RequestEvent<{ id: string }>) =>
	change(event, async (actor, ctx, input) => {
		const word = what === 'deactivate' ? 'Deactivation' : 'Reactivation';
		const button = what === 'deactivate' ? 'Deactivate' : 'Reactivate';
		if (input.confirm !== 'yes')
			throw new FormProblem({ form: `${word} was not confirmed. Use “${button} account…” and confirm on the panel that opens.` });
		await service(actor, ctx, event.params.id);
		redirect(303, `/people/${event.params.id}?done=${what}d`);
	});

export const actions: Actions = {
	role: (event) =>
		change(event, async (actor, ctx, input) => {
			const study = (await listStudies(actor)).find((s) => s.id === input.studyId);
			if (!study) throw new FormProblem({ studyId: 'Choose a study from the list: the one sent does not exist.' });
			const role = parseRole(input.role, study.code, 'role');
			const changed = await setStudyRole(actor, ctx, event.params.id, study.id, role);
			const what = role ? `now ${ROLE_LABELS[role]}` : 'no role any more';
			return {
				studyId: study.id,
				done: changed ? `${study.code}: ${what}.` : `${study.code}: unchanged (${role ? ROLE_LABELS[role] : 'no role'}).`
			};
		}),
	admin: (event) =>
		change(event, async (actor, ctx, input) => {
			if (input.isAdmin !== 'yes' && input.isAdmin !== 'no')
				throw new FormProblem({ isAdmin: 'Say whether the person should be a lab administrator (yes or no).' });
			const changed = await setLabAdmin(actor, ctx, event.params.id, input.isAdmin === 'yes');
			return {
				done: !changed ? 'Nothing to change.' : input.isAdmin === 'yes' ? 'Now a lab administrator.' : 'No longer a lab administrator.'
			};
		}),
	deactivate: confirmed('deactivate', deactivatePerson),
	reactivate: confirmed('reactivate', reactivatePerson)
};
