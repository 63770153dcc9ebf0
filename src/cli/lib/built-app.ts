// The built app (build/index.js) started on a free local port, and signing in to it over HTTP with the password form.
// Shared by the integration tests and `npm run bench:upload`.
import { freePort, start, stop, waitForPort, type Child } from './proc';

/**
 * Starts the built app at `entry` with `env` (which must carry DATABASE_URL) on 127.0.0.1 and a free port; resolves
 * once it listens. A child that does not come up in 30 s is stopped before the error is passed on.
 */
export async function startBuiltApp(entry: string, env: NodeJS.ProcessEnv): Promise<{ app: Child; base: string }> {
	const port = await freePort();
	const base = `http://127.0.0.1:${port}`;
	const app = start('app', process.execPath, [entry], {
		quiet: true,
		// BODY_SIZE_LIMIT: the trial upload enforces its own per-file limit while streaming (UPLOAD_LIMIT_BYTES)
		env: { ...env, HOST: '127.0.0.1', PORT: String(port), ORIGIN: base, BODY_SIZE_LIMIT: 'Infinity' }
	});
	try {
		await waitForPort(port, '127.0.0.1', 30_000, app);
	} catch (e) {
		await stop(app);
		throw e;
	}
	return { app, base };
}

/** Sends the password form of /signin as a browser does; `cookie` is the session cookie header ('' when refused). */
export async function passwordSignIn(
	base: string,
	email: string,
	password: string
): Promise<{ status: number; cookie: string; location: string | null }> {
	const body = new URLSearchParams({ providerId: 'password', email, password, redirectTo: '/' });
	const res = await fetch(`${base}/signin?/password`, {
		method: 'POST',
		body,
		redirect: 'manual',
		// accept: text/html makes it a browser-like form post (SvelteKit answers other clients with JSON)
		headers: { origin: base, 'content-type': 'application/x-www-form-urlencoded', accept: 'text/html' }
	});
	const cookie = res.headers
		.getSetCookie()
		.map((c) => c.split(';')[0])
		.filter((c) => c.includes('session-token') && !c.endsWith('='))
		.join('; ');
	return { status: res.status, cookie, location: res.headers.get('location') };
}

/** The session cookie header of `email`; throws when the sign-in is refused. */
export async function sessionCookie(base: string, email: string, password: string): Promise<string> {
	const r = await passwordSignIn(base, email, password);
	if (!r.cookie) throw new Error(`could not sign in as ${email} (status ${r.status}, location ${r.location})`);
	return r.cookie;
}
