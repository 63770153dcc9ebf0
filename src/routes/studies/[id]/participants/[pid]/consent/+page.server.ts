// A participant's consent for the study team: state and history (no personal data); invitations for PI and
// technicians; after a withdrawal, the PI's keep/exclude decision on each flagged run.
import { FormProblem } from '$lib/server/errors';
import { statusOf } from '$lib/server/http/edge';
import { fail, redirect, type RequestEvent } from '@sveltejs/kit';
import { consentOverview, sendConsentLink } from '$lib/server/consent/workflow';
import { decideFlaggedRun } from '$lib/server/runs/flags';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => ({
	...(await consentOverview(event, event.params.id, event.params.pid)),
	sent: event.url.searchParams.get('sent'),
	decided: event.url.searchParams.get('decided')
});

async function send(event: RequestEvent<{ id: string; pid: string }>, kind: 'invitation' | 'resend' | 'reminder') {
	let outcome: Awaited<ReturnType<typeof sendConsentLink>>;
	try {
		outcome = await sendConsentLink(event, event.params.id, event.params.pid, kind);
	} catch (err) {
		if (err instanceof FormProblem) return fail(statusOf(err), { errors: err.errors, mailProblem: null });
		throw err;
	}
	// the state change is kept even when the e-mail failed: say so on the page (502: the mail server let us down)
	if (!outcome.mailed) return fail(502, { errors: {} as Record<string, string>, mailProblem: outcome.mailProblem });
	redirect(303, `/studies/${event.params.id}/participants/${event.params.pid}/consent?sent=${kind}`);
}

export const actions: Actions = {
	invite: (event) => send(event, 'invitation'),
	resend: (event) => send(event, 'resend'),
	remind: (event) => send(event, 'reminder'),
	decide: async (event) => {
		const form = await event.request.formData();
		try {
			await decideFlaggedRun(event, event.params.id, String(form.get('runId') ?? ''), String(form.get('decision') ?? ''), String(form.get('note') ?? ''));
		} catch (err) {
			if (err instanceof FormProblem) return fail(statusOf(err), { errors: err.errors, mailProblem: null, runId: String(form.get('runId') ?? '') });
			throw err;
		}
		redirect(303, `/studies/${event.params.id}/participants/${event.params.pid}/consent?decided=1`);
	}
};
