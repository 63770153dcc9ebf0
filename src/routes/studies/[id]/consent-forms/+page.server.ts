// Consent form versions of a study: every member reads them; the PI publishes a new version (older ones never change).
import { FormProblem } from '$lib/server/errors';
import { statusOf } from '$lib/server/http/edge';
import { fail, redirect } from '@sveltejs/kit';
import { may } from '$lib/server/access/guard';
import { guardStudy, listConsentVersions, publishConsentVersion } from '$lib/server/studies/records';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { actor, study } = await guardStudy(event, 'study.read', event.params.id);
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
		let version: number;
		try {
			version = await publishConsentVersion(event, event.params.id, form);
		} catch (err) {
			if (err instanceof FormProblem) {
				return fail(statusOf(err), { values: { bodyMarkdown: String(form.get('bodyMarkdown') ?? ''), confirmations: String(form.get('confirmations') ?? '') }, errors: err.errors });
			}
			throw err;
		}
		redirect(303, `/studies/${event.params.id}/consent-forms?published=${version}`);
	}
};
