// One participant: research data, measured segment lengths (history) and, for PI and technicians, personal data.
import { redirect, type RequestEvent } from '@sveltejs/kit';
import { callerOf, edge, formEdge, formValues } from '$lib/server/http/edge';
import { addLength, readParticipant, savePersonal, updateResearchFields, type FormFields } from '$lib/server/participants/records';
import { consentStateOf } from '$lib/server/consent/check';
import { listSessionsOfParticipant } from '$lib/server/sessions/sessions';
import type { Actions, PageServerLoad } from './$types';
import type { Actor } from '$lib/server/access/guard';
import type { RequestContext } from '$lib/server/access/context';

export const load: PageServerLoad = (event) =>
	edge(event, async () => ({
		...(await readParticipant(...callerOf(event), event.params.id, event.params.pid)),
		// consent state by word only (readParticipant above has checked access and that the participant is in this study)
		consent: await consentStateOf(event.params.pid.toLowerCase()),
		// the participant's sessions, newest first (a small block of the page)
		sessionList: await listSessionsOfParticipant(...callerOf(event), { studyId: event.params.id, participantId: event.params.pid }),
		added: event.url.searchParams.get('added'),
		saved: event.url.searchParams.get('saved'),
		today: new Date().toISOString().slice(0, 10)
	}));

type Save = (actor: Actor | null, ctx: RequestContext, rawId: string, rawPid: string, values: FormFields) => Promise<unknown>;

/** One of the page's forms: saved, back to the page (with `saved` when it says so); refused, its fields' messages. */
async function save(
	event: RequestEvent<{ id: string; pid: string }>,
	service: Save,
	flags: { personal: boolean; research?: true },
	saved?: string
) {
	const values = formValues(await event.request.formData());
	return formEdge(
		event,
		async () => {
			await service(...callerOf(event), event.params.id, event.params.pid, values);
			redirect(303, `/studies/${event.params.id}/participants/${event.params.pid}${saved ? `?saved=${saved}` : ''}`);
		},
		{ values, extra: flags }
	);
}

export const actions: Actions = {
	length: (event) => save(event, addLength, { personal: false }),
	research: (event) => save(event, updateResearchFields, { personal: false, research: true }, 'research'),
	personal: (event) => save(event, savePersonal, { personal: true }, 'personal')
};
