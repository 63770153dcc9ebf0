// Home: each signed-in person's work queues by role (the shell still renders when the database is down).
import { workQueuesOf } from '$lib/server/session-workflow';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => {
	if (!locals.actor) return { work: null };
	try {
		return { work: await workQueuesOf(locals.actor) };
	} catch {
		return { work: null };
	}
};
