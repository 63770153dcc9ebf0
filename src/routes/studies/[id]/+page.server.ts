// One study: code, title and team, for its members only (others, administrators included, get 404).
import { readStudy } from '$lib/server/studies';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => ({ study: await readStudy(event, event.params.id) });
