// The participants of a study: search by code, sort and paging on the server; personal data only for PI and technicians.
import { callerOf, edge } from '$lib/server/http/edge';
import { listParticipants, parseListQuery } from '$lib/server/participants/records';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = (event) =>
	edge(event, async () => {
		const q = event.url.searchParams;
		const imported = /^\d+$/.test(q.get('imported') ?? '')
			? { count: Number(q.get('imported')), first: q.get('first') ?? '', last: q.get('last') ?? '' }
			: null;
		return { ...(await listParticipants(...callerOf(event), event.params.id, parseListQuery(event.url))), added: q.get('added'), imported };
	});
