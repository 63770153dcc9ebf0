// Sign-out (POST only): ends this session; "everywhere" also invalidates every other session of the account.
import { redirect } from '@sveltejs/kit';
import { signOut } from '$lib/server/auth';
import { callerOf } from '$lib/server/http/edge';
import { signOutRecorded } from '$lib/server/people/account';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async () => redirect(303, '/');

export const actions: Actions = {
	default: async (event) => {
		const everywhere = (await event.request.clone().formData()).get('everywhere') === 'yes';
		await signOutRecorded(...callerOf(event), everywhere);
		return signOut(event);
	}
};
