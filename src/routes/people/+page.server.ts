// People list (lab administrators): search, sort and paging from the URL, so every view can be bookmarked.
import { requireLab } from '$lib/server/http/edge';
import { listPeople, parsePeopleQuery, ROLE_LABELS } from '$lib/server/people/manage';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const actor = await requireLab(event, 'people.manage');
	const result = await listPeople(actor, parsePeopleQuery(event.url.searchParams));
	return { ...result, roleLabels: ROLE_LABELS, me: actor.id };
};
