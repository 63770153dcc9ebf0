// Shell data for every page: the lab's name, who is signed in, and their work queues (the count in the navigation;
// the home page lists them). The shell still renders when the database is down.
import { currentLab } from '$lib/server/studies/lab';
import { workQueuesOf } from '$lib/server/sessions/workflow';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async ({ locals }) => {
	const person = locals.actor
		? { name: locals.actor.name ?? locals.actor.email, email: locals.actor.email, isAdmin: locals.actor.isAdmin }
		: null;
	try {
		return { lab: await currentLab(), person, work: locals.actor ? await workQueuesOf(locals.actor) : null };
	} catch {
		return { lab: null, person, work: null };
	}
};
