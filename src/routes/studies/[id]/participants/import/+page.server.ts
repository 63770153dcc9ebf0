// Import participants from a CSV file (PI, technician): "check" is a dry run with a preview; "import" writes all rows or none.
import { redirect } from '@sveltejs/kit';
import { callerOf, edge, formEdge } from '$lib/server/http/edge';
import { checkImportUpload, importPage, ImportRefused, runImport } from '$lib/server/participants/import';
import type { FormProblem } from '$lib/server/errors';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) => edge(event, () => importPage(...callerOf(event), event.params.id));

/** A refusal shows the checked rows (when there are any) and the message about the file as a whole. */
const refused = (p: FormProblem) => ({ view: p instanceof ImportRefused ? p.view : undefined, message: p.errors.form });

export const actions: Actions = {
	check: async (event) => {
		const file = (await event.request.formData()).get('file');
		return formEdge(event, async () => ({ view: await checkImportUpload(...callerOf(event), event.params.id, file) }), { extra: refused });
	},
	import: async (event) => {
		const form = await event.request.formData();
		const text = (k: string) => String(form.get(k) ?? '');
		return formEdge(
			event,
			async () => {
				const out = await runImport(...callerOf(event), event.params.id, {
					content: text('content'),
					sha256: text('sha256'),
					fileName: text('fileName'),
					firstNumber: Number(form.get('firstNumber'))
				});
				redirect(
					303,
					`/studies/${event.params.id}/participants?${new URLSearchParams({ imported: String(out.count), first: out.firstCode, last: out.lastCode })}`
				);
			},
			{ extra: refused }
		);
	}
};
