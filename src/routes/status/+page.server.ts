// System status page: the same checks as /api/health, for people.
import { health } from '$lib/server/health';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async () => ({ health: await health() });
