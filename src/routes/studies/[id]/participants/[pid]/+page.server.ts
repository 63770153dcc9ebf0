// One participant: research data, measured segment lengths (history) and, for PI and technicians, personal data.
import { FormProblem } from '$lib/server/errors';
import { statusOf } from '$lib/server/http/edge';
import { fail, redirect } from '@sveltejs/kit';
import { addLength, readParticipant, savePersonal, updateResearchFields } from '$lib/server/participants/records';
import { consentStateOf } from '$lib/server/consent/check';
import { listSessionsOfParticipant } from '$lib/server/sessions/sessions';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => ({
	...(await readParticipant(event, event.params.id, event.params.pid)),
	// consent state by word only (readParticipant above has checked access and that the participant is in this study)
	consent: await consentStateOf(event.params.pid.toLowerCase()),
	// the participant's sessions, newest first (a small block of the page)
	sessionList: await listSessionsOfParticipant(event, event.params.id, event.params.pid),
	added: event.url.searchParams.get('added'),
	saved: event.url.searchParams.get('saved'),
	today: new Date().toISOString().slice(0, 10)
});

export const actions: Actions = {
	length: async (event) => {
		const form = await event.request.formData();
		try {
			await addLength(event, event.params.id, event.params.pid, form);
		} catch (err) {
			if (err instanceof FormProblem) {
				return fail(statusOf(err), { personal: false, values: Object.fromEntries([...form.entries()].map(([k, v]) => [k, String(v)])), errors: err.errors });
			}
			throw err;
		}
		redirect(303, `/studies/${event.params.id}/participants/${event.params.pid}`);
	},
	research: async (event) => {
		const form = await event.request.formData();
		try {
			await updateResearchFields(event, event.params.id, event.params.pid, form);
		} catch (err) {
			if (err instanceof FormProblem) {
				return fail(statusOf(err), { personal: false, research: true, values: Object.fromEntries([...form.entries()].map(([k, v]) => [k, String(v)])), errors: err.errors });
			}
			throw err;
		}
		redirect(303, `/studies/${event.params.id}/participants/${event.params.pid}?saved=research`);
	},
	personal: async (event) => {
		const form = await event.request.formData();
		try {
			await savePersonal(event, event.params.id, event.params.pid, form);
		} catch (err) {
			if (err instanceof FormProblem) {
				return fail(statusOf(err), { personal: true, values: Object.fromEntries([...form.entries()].map(([k, v]) => [k, String(v)])), errors: err.errors });
			}
			throw err;
		}
		redirect(303, `/studies/${event.params.id}/participants/${event.params.pid}?saved=personal`);
	}
};
