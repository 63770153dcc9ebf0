// Shell data for every page: the lab's name and who is signed in (the shell still renders when the database is down).
import { currentLab } from '$lib/server/lab';
import { workQueuesOf } from '$lib/server/session-workflow';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async ({ locals }) => {
	const person = locals.actor ? { name: locals.actor.name ?? locals.actor.email, email: locals.actor.email, isAdmin: locals.actor.isAdmin } : null;
	try {
		// the number of items waiting in the person's work queues, for the badge in the navigation
		const waiting = locals.actor ? (await workQueuesOf(locals.actor)).total : 0;
		return { lab: await currentLab(), person, waiting };
	} catch {
		return { lab: null, person, waiting: 0 };
	}
};
