// The signed-in person's account: who they are, their study roles, changing the password (then signing in again).
import { fail } from '@sveltejs/kit';
import { signOut } from '$lib/server/auth';
import { accountOverview, changePassword } from '$lib/server/people/account';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => ({ account: await accountOverview(event) });

export const actions: Actions = {
	password: async (event) => {
		// read a copy: signOut() below reads the form again (for its redirectTo field)
		const form = await event.request.clone().formData();
		const field = (name: string) => String(form.get(name) ?? '');
		const problems = await changePassword(event, { current: field('current'), next: field('next'), repeat: field('repeat') });
		if (problems) return fail(400, { problems });
		// every session is already invalid; this also clears this browser's cookie and lands on the explanation
		return signOut(event);
	}
};
