// Study settings (PI only): ethics reference and expiry, default segment table; every change is audited.
import { FormProblem } from '$lib/server/errors';
import { statusOf } from '$lib/server/http/edge';
import { fail, redirect } from '@sveltejs/kit';
import { SEGMENT_TABLES } from '$lib/anthropometry';
import { guardStudy, saveSettings, TABLE_IDS } from '$lib/server/studies/records';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { study } = await guardStudy(event, 'study.edit', event.params.id);
	return {
		study: { id: study.id, code: study.code, title: study.title },
		values: { ethicsReference: study.ethicsReference ?? '', ethicsExpiresOn: study.ethicsExpiresOn ?? '', defaultTable: study.defaultTable },
		tables: TABLE_IDS.map((id) => ({ id, title: SEGMENT_TABLES[id].title }))
	};
};

export const actions: Actions = {
	default: async (event) => {
		const form = await event.request.formData();
		try {
			await saveSettings(event, event.params.id, form);
		} catch (err) {
			if (err instanceof FormProblem) {
				return fail(statusOf(err), { values: Object.fromEntries([...form.entries()].map(([k, v]) => [k, String(v)])), errors: err.errors });
			}
			throw err;
		}
		redirect(303, `/studies/${event.params.id}`);
	}
};
