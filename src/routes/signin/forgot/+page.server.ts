// "Forgot your password?": e-mails a reset link. The answer is the same whether or not the address has an account.
import { contextOf } from '$lib/server/http/edge';
import { fail } from '@sveltejs/kit';
import { emailProblem, requestPasswordReset } from '$lib/server/people/manage';
import { TOKEN_LIFETIME_MS } from '$lib/server/auth/tokens';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async () => ({ linkMinutes: TOKEN_LIFETIME_MS['password-reset'] / 60_000 });

export const actions: Actions = {
	default: async (event) => {
		const form = await event.request.formData();
		const email = String(form.get('email') ?? '')
			.trim()
			.toLowerCase();
		const problem = emailProblem(email, 'your');
		if (problem) return fail(400, { email, error: problem, sent: false });
		// not awaited: how long the answer takes must not tell whether an e-mail was sent
		requestPasswordReset(contextOf(event), email).catch((err: Error) =>
			console.error('[password reset] could not send the link:', err.message)
		);
		return { email, error: null, sent: true };
	}
};
