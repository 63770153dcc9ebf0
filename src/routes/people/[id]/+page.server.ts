// One person (lab administrators): study roles, the lab administrator flag, deactivation and reactivation.
import { FormProblem } from '$lib/server/errors';
import { contextOf, statusOf } from '$lib/server/http/edge';
import { error, fail, redirect, type RequestEvent } from '@sveltejs/kit';
import { type Actor } from '$lib/server/access/guard';
import { requireLab } from '$lib/server/http/edge';
import { deactivatePerson, getPerson, listStudies, parseRole, reactivatePerson, ROLE_LABELS, setLabAdmin, setStudyRole, STUDY_ROLES } from '$lib/server/people/manage';
import type { Actions, PageServerLoad } from './$types';

const NO_SUCH_PERSON = 'There is no such person in this lab. Find them in the people list.';

export const load: PageServerLoad = async (event) => {
	const actor = await requireLab(event, 'people.manage');
	const person = await getPerson(actor, event.params.id);
	if (!person) error(404, NO_SUCH_PERSON);
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

/** Runs one change; a refused change comes back to the page with its message, an unknown person is a 404. */
async function attempt<T>(event: RequestEvent, actor: Actor, change: (form: FormData) => Promise<T>) {
	if (!(await getPerson(actor, event.params.id ?? ''))) error(404, NO_SUCH_PERSON);
	const form = await event.request.formData();
	try {
		return await change(form);
	} catch (err) {
		if (!(err instanceof FormProblem)) throw err;
		if (err.kind === 'not-found') error(404, NO_SUCH_PERSON);
		return fail(statusOf(err), { errors: err.errors });
	}
}

export const actions: Actions = {
	role: async (event) => {
		const actor = await requireLab(event, 'people.manage');
		return attempt(event, actor, async (form) => {
			const studyId = String(form.get('studyId') ?? '');
			const study = (await listStudies(actor)).find((s) => s.id === studyId);
			if (!study) throw new FormProblem({ studyId: 'Choose a study from the list: the one sent does not exist.' });
			const role = parseRole(form.get('role'), study.code, 'role');
			const changed = await setStudyRole(actor, contextOf(event), event.params.id, study.id, role);
			const what = role ? `now ${ROLE_LABELS[role]}` : 'no role any more';
			return { studyId: study.id, done: changed ? `${study.code}: ${what}.` : `${study.code}: unchanged (${role ? ROLE_LABELS[role] : 'no role'}).` };
		});
	},
	admin: async (event) => {
		const actor = await requireLab(event, 'people.manage');
		return attempt(event, actor, async (form) => {
			const value = String(form.get('isAdmin') ?? '');
			if (value !== 'yes' && value !== 'no') throw new FormProblem({ isAdmin: 'Say whether the person should be a lab administrator (yes or no).' });
			const changed = await setLabAdmin(actor, contextOf(event), event.params.id, value === 'yes');
			return { done: !changed ? 'Nothing to change.' : value === 'yes' ? 'Now a lab administrator.' : 'No longer a lab administrator.' };
		});
	},
	deactivate: async (event) => {
		const actor = await requireLab(event, 'people.manage');
		const outcome = await attempt(event, actor, async (form) => {
			if (form.get('confirm') !== 'yes') throw new FormProblem({ form: 'Deactivation was not confirmed. Use “Deactivate account…” and confirm on the panel that opens.' });
			await deactivatePerson(actor, contextOf(event), event.params.id);
			return null;
		});
		if (outcome) return outcome;
		redirect(303, `/people/${event.params.id}?done=deactivated`);
	},
	reactivate: async (event) => {
		const actor = await requireLab(event, 'people.manage');
		const outcome = await attempt(event, actor, async (form) => {
			if (form.get('confirm') !== 'yes') throw new FormProblem({ form: 'Reactivation was not confirmed. Use “Reactivate account…” and confirm on the panel that opens.' });
			await reactivatePerson(actor, contextOf(event), event.params.id);
			return null;
		});
		if (outcome) return outcome;
		redirect(303, `/people/${event.params.id}?done=reactivated`);
	}
};
