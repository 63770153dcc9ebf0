// Consent form versions of a study: every member reads them; the PI publishes a new version (older ones never change).
import { redirect } from '@sveltejs/kit';
import { may } from '$lib/server/access/guard';
import { formEdge, callerOf, requireStudyRecord } from '$lib/server/http/edge';
import { listConsentVersions, publishConsentVersion } from '$lib/server/consent/forms';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { actor, study } = await requireStudyRecord(event, 'study.read', event.params.id);
	return {
		study: { id: study.id, code: study.code, title: study.title },
		versions: await listConsentVersions(study.id),
		mayPublish: may(actor, 'consent.publish', study.id),
		published: event.url.searchParams.get('published')
	};
};

export const actions: Actions = {
	publish: async (event) => {
		const form = await event.request.formData();
		const values = { bodyMarkdown: String(form.get('bodyMarkdown') ?? ''), confirmations: String(form.get('confirmations') ?? '') };
		return formEdge(
			event,
			async () => {
				const version = await publishConsentVersion(...callerOf(event), event.params.id, values);
				redirect(303, `/studies/${event.params.id}/consent-forms?published=${version}`);
			},
			{ values }
		);
	}
};
