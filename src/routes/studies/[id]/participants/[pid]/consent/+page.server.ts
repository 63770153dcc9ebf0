// A participant's consent for the study team: state and history (no personal data); invitations for PI and
// technicians; after a withdrawal, the PI's keep/exclude decision on each flagged run.
import { redirect, type RequestEvent } from '@sveltejs/kit';
import { callerOf, edge, formEdge } from '$lib/server/http/edge';
import { consentOverview, MailNotSent, sendConsentLink } from '$lib/server/consent/workflow';
import { decideFlaggedRun } from '$lib/server/runs/flags';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) =>
	edge(event, async () => ({
		...(await consentOverview(...callerOf(event), event.params.id, event.params.pid)),
		sent: event.url.searchParams.get('sent'),
		decided: event.url.searchParams.get('decided')
	}));

function send(event: RequestEvent<{ id: string; pid: string }>, kind: 'invitation' | 'resend' | 'reminder') {
	return formEdge(
		event,
		async () => {
			await sendConsentLink(...callerOf(event), event.params.id, event.params.pid, kind);
			redirect(303, `/studies/${event.params.id}/participants/${event.params.pid}/consent?sent=${kind}`);
		},
		// the state change is kept even when the e-mail failed: the page says so
		{ extra: (p) => ({ mailProblem: p instanceof MailNotSent ? p.mailProblem : null }) }
	);
}

export const actions: Actions = {
	invite: (event) => send(event, 'invitation'),
	resend: (event) => send(event, 'resend'),
	remind: (event) => send(event, 'reminder'),
	decide: async (event) => {
		const form = await event.request.formData();
		const runId = String(form.get('runId') ?? '');
		return formEdge(
			event,
			async () => {
				await decideFlaggedRun(...callerOf(event), {
					studyId: event.params.id,
					runId,
					decision: String(form.get('decision') ?? ''),
					note: String(form.get('note') ?? '')
				});
				redirect(303, `/studies/${event.params.id}/participants/${event.params.pid}/consent?decided=1`);
			},
			{ extra: { mailProblem: null, runId } }
		);
	}
};
