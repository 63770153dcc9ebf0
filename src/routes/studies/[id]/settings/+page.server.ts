// Study settings (PI only): ethics reference and expiry, default segment table; every change is audited.
import { redirect } from '@sveltejs/kit';
import { SEGMENT_TABLES } from '$lib/anthropometry';
import { callerOf, edge, formEdge, formValues } from '$lib/server/http/edge';
import { saveSettings, settingsOf, TABLE_IDS } from '$lib/server/studies/records';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) =>
	edge(event, async () => ({
		...(await settingsOf(...callerOf(event), event.params.id)),
		tables: TABLE_IDS.map((id) => ({ id, title: SEGMENT_TABLES[id].title }))
	}));

export const actions: Actions = {
	default: async (event) => {
		const form = await event.request.formData();
		return formEdge(
			event,
			async () => {
				await saveSettings(...callerOf(event), event.params.id, Object.fromEntries(form));
				redirect(303, `/studies/${event.params.id}`);
			},
			{ values: formValues(form) }
		);
	}
};
