// The studies the signed-in person works on, with their role (administrators see every study).
import { listStudies } from '$lib/server/studies/studies';
import { actorOf, edge } from '$lib/server/http/edge';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = (event) => edge(event, () => listStudies(actorOf(event)));
