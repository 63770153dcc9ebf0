// The signed-in person's account: who they are, their study roles, changing the password (then signing in again).
import { signOut } from '$lib/server/auth';
import { actorOf, callerOf, edge, formEdge } from '$lib/server/http/edge';
import { accountOverview, changePassword } from '$lib/server/people/account';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = (event) => edge(event, async () => ({ account: await accountOverview(actorOf(event)) }));

export const actions: Actions = {
	password: async (event) => {
		// read a copy: signOut() below reads the form again (for its redirectTo field)
		const form = await event.request.clone().formData();
		const field = (name: string) => String(form.get(name) ?? '');
		return formEdge(event, async () => {
			await changePassword(...callerOf(event), { current: field('current'), next: field('next'), repeat: field('repeat') });
			// every session is already invalid; this also clears this browser's cookie and lands on the explanation
			return signOut(event);
		});
	}
};
