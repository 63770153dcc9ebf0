// Comparisons: sessions of one participant overlaid, or a group mean ± SD across participants (codes only).
import { loadCompare } from '$lib/server/review/review';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => loadCompare(event, event.params.id);
