// Import participants from a CSV file (PI, technician): "check" is a dry run with a preview; "import" writes all rows or none.
import { fail, redirect } from '@sveltejs/kit';
import { checkImportUpload, importPage, runImport } from '$lib/server/participants/import';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => importPage(event, event.params.id);

export const actions: Actions = {
	check: async (event) => {
		const out = await checkImportUpload(event, event.params.id, await event.request.formData());
		if (out.status === 200) return { view: out.view };
		return fail(out.status, { view: out.view, message: out.message });
	},
	import: async (event) => {
		const out = await runImport(event, event.params.id, await event.request.formData());
		if (out.status === 303) {
			const q = new URLSearchParams({ imported: String(out.count), first: out.firstCode, last: out.lastCode });
			redirect(303, `/studies/${event.params.id}/participants?${q}`);
		}
		return fail(out.status, { view: out.view, message: out.message });
	}
};
