// The studies the signed-in person works on, with their role (administrators see every study).
import { listStudies } from '$lib/server/studies/studies';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => listStudies(event);
