// Sign-out (POST only): ends this session; "everywhere" also invalidates every other session of the account.
import { redirect } from '@sveltejs/kit';
import { signOut } from '$lib/server/auth';
import { signOutEverywhere } from '$lib/server/people/manage';
import { record } from '$lib/server/audit/record';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async () => redirect(303, '/');

export const actions: Actions = {
	default: async (event) => {
		const actor = event.locals.actor;
		const everywhere = (await event.request.clone().formData()).get('everywhere') === 'yes';
		if (actor) {
			if (everywhere) await signOutEverywhere(actor.id);
			await record({ action: everywhere ? 'auth.sign-out-everywhere' : 'auth.sign-out', actorUserId: actor.id, actorLabel: actor.email, ipAddress: event.getClientAddress() });
		}
		return signOut(event);
	}
};
