// The participants of a study: search by code, sort and paging on the server; personal data only for PI and technicians.
import { listParticipants } from '$lib/server/participants/records';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const q = event.url.searchParams;
	const imported = /^\d+$/.test(q.get('imported') ?? '') ? { count: Number(q.get('imported')), first: q.get('first') ?? '', last: q.get('last') ?? '' } : null;
	return { ...(await listParticipants(event, event.params.id)), added: q.get('added'), imported };
};
