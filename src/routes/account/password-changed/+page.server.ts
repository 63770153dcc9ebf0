// After a password change: the person is signed out everywhere; someone still signed in has nothing to read here.
import { redirect } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => {
	if (locals.actor) redirect(303, '/account');
};
