// Shell data for every page: the lab's name and who is signed in (the shell still renders when the database is down).
import { currentLab } from '$lib/server/lab';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async ({ locals }) => {
	const person = locals.actor ? { name: locals.actor.name ?? locals.actor.email, email: locals.actor.email, isAdmin: locals.actor.isAdmin } : null;
	try {
		return { lab: await currentLab(), person };
	} catch {
		return { lab: null, person };
	}
};
