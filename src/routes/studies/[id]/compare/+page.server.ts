// Comparisons: sessions of one participant overlaid, or a group mean ± SD across participants (codes only).
import { callerOf, edge } from '$lib/server/http/edge';
import { loadCompare } from '$lib/server/review/review';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = (event) =>
	edge(event, () => loadCompare(...callerOf(event), { studyId: event.params.id, query: event.url.searchParams }));
