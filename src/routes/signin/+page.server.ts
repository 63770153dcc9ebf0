// Sign-in page: e-mailed link or password. Messages never say whether an address has an account.
import { fail, redirect, type RequestEvent } from '@sveltejs/kit';
import { CredentialsSignin } from '@auth/sveltekit';
import { signIn } from '$lib/server/auth';
import { LIMITS } from '$lib/server/auth/rate-limit';
import type { Actions, PageServerLoad } from './$types';

const safeNext = (next: string | null) => (next && next.startsWith('/') && !next.startsWith('//') ? next : '/');

const messages: Record<string, string> = {
	credentials: 'That e-mail address and password do not match an account that can sign in. Check both, or use an e-mailed link.',
	rate_limited: `Too many failed sign-ins. Wait ${LIMITS.windowMinutes} minutes and try again, or use an e-mailed link.`,
	Verification: 'That sign-in link has expired or has already been used. Ask for a new one below.',
	AccessDenied: 'This account cannot sign in. Ask your lab administrator.'
};

export const load: PageServerLoad = async ({ locals, url }) => {
	if (locals.actor) redirect(303, safeNext(url.searchParams.get('next')));
	const code = url.searchParams.get('code') ?? url.searchParams.get('error');
	return { message: code ? (messages[code] ?? 'Sign-in did not work. Try again.') : null, next: safeNext(url.searchParams.get('next')) };
};

async function validated(request: Request, provider: 'nodemailer' | 'password') {
	const form = await request.clone().formData();
	const email = String(form.get('email') ?? '').trim();
	if (!/^[^\s@]+@[^\s@]+\.[^\s@]+$/.test(email))
		return fail(400, { provider, email, error: 'Enter your e-mail address, e.g. name@lab.example.' });
	if (provider === 'password' && !String(form.get('password') ?? '')) return fail(400, { provider, email, error: 'Enter your password.' });
	if (form.get('providerId') !== provider) return fail(400, { provider, email, error: 'Choose a way to sign in.' });
	return null;
}

/** Auth.js redirects on success; a refused password comes back as an error, shown on this page by its code. */
async function attempt(event: RequestEvent) {
	try {
		await signIn(event);
	} catch (err) {
		if (err instanceof CredentialsSignin) {
			const next = safeNext(event.url.searchParams.get('next'));
			redirect(303, `/signin?code=${encodeURIComponent(err.code)}${next !== '/' ? `&next=${encodeURIComponent(next)}` : ''}`);
		}
		throw err;
	}
}

export const actions: Actions = {
	link: async (event) => (await validated(event.request, 'nodemailer')) ?? attempt(event),
	password: async (event) => (await validated(event.request, 'password')) ?? attempt(event)
};
