// Sign-in with Auth.js: an e-mailed link (Nodemailer provider) or a password (Credentials provider), JWT sessions
// that the server re-checks on every request against the account (deactivation, "sign out everywhere").
import { SvelteKitAuth, CredentialsSignin, type SvelteKitAuthConfig } from '@auth/sveltekit';
import Credentials from '@auth/sveltekit/providers/credentials';
import Nodemailer from '@auth/sveltekit/providers/nodemailer';
import SequelizeAdapter from '@auth/sequelize-adapter';
import type { Adapter } from '@auth/core/adapters';
import { db } from '../db/index';
import { User } from '../db/models';
import { config } from '../config';
import { sendMail } from '../mail/index';
import { record } from '../audit/record';
import { currentClientAddress } from '../http/request-context';
import { verifyPassword } from './password';
import { checkThrottle, recordFailure, LIMITS } from './rate-limit';

/** How long an e-mailed sign-in link stays valid. */
export const SIGN_IN_LINK_MINUTES = 15;
/** How long a session lasts without signing in again. */
export const SESSION_HOURS = 10;

export class RateLimited extends CredentialsSignin {
	code = 'rate_limited';
}

let adapter: Adapter | null = null;
function authAdapter(): Adapter {
	// the adapter defines its Sequelize models on first use: create it once per process
	adapter ??= SequelizeAdapter(db(), { models: { User: User as never }, synchronize: false }) as Adapter;
	return adapter;
}

export const normaliseEmail = (e: unknown) =>
	String(e ?? '')
		.trim()
		.toLowerCase();

function clientAddress(request: Request): string | null {
	return request.headers.get('x-momentry-client-address');
}

export const {
	handle: authHandle,
	signIn,
	signOut
} = SvelteKitAuth(async (): Promise<SvelteKitAuthConfig> => ({
	adapter: authAdapter(),
	secret: process.env.AUTH_SECRET,
	trustHost: true,
	basePath: '/auth',
	session: { strategy: 'jwt' as const, maxAge: SESSION_HOURS * 3600 },
	pages: { signIn: '/signin', verifyRequest: '/signin/check-email', error: '/signin' },
	providers: [
		Nodemailer({
			server: config().SMTP_URL,
			from: config().MAIL_FROM,
			maxAge: SIGN_IN_LINK_MINUTES * 60,
			async sendVerificationRequest({ identifier, url }) {
				await sendMail({
					to: identifier,
					subject: 'Your Momentry sign-in link',
					text: `Use this link within ${SIGN_IN_LINK_MINUTES} minutes to sign in to Momentry. It works once.\n\n${url}\n\nIf you did not ask for it, ignore this e-mail: nobody can sign in without the link.`
				});
			}
		}),
		Credentials({
			id: 'password',
			credentials: { email: { type: 'email' }, password: { type: 'password' } },
			async authorize(input, request) {
				const email = normaliseEmail(input.email);
				const password = String(input.password ?? '');
				const ip = clientAddress(request);
				const throttle = await checkThrottle(email, ip);
				if (throttle.blocked) {
					await record({
						action: 'auth.sign-in',
						actorLabel: email,
						outcome: 'denied',
						ipAddress: ip,
						details: { method: 'password', reason: 'rate limited' }
					});
					throw new RateLimited();
				}
				const user = await User.findOne({ where: { email } });
				const ok = await verifyPassword(user?.passwordHash ?? null, password);
				if (!user || !ok || user.deactivatedAt) {
					await recordFailure(email, ip);
					await record({
						action: 'auth.sign-in',
						actorLabel: email,
						actorUserId: user?.id ?? null,
						outcome: 'failed',
						ipAddress: ip,
						details: { method: 'password', reason: !user ? 'no such account' : user.deactivatedAt ? 'deactivated' : 'wrong password' }
					});
					return null;
				}
				return { id: user.id, email: user.email, name: user.name };
			}
		})
	],
	callbacks: {
		async signIn({ user, email, account }) {
			if (account?.provider !== 'nodemailer') return true;
			const existing = await User.findOne({ where: { email: normaliseEmail(user.email) } });
			const usable = existing && !existing.deactivatedAt;
			if (email?.verificationRequest) {
				// Unknown and deactivated addresses get the same page as real ones, and no e-mail.
				if (!usable) {
					await record({
						action: 'auth.sign-in-link',
						actorLabel: normaliseEmail(user.email),
						outcome: 'denied',
						ipAddress: currentClientAddress(),
						details: { reason: existing ? 'deactivated' : 'no such account' }
					});
					// exactly where Auth.js sends a real request (it forwards to pages.verifyRequest from there)
					return '/auth/verify-request?provider=nodemailer&type=email';
				}
				await record({
					action: 'auth.sign-in-link',
					actorLabel: existing.email,
					actorUserId: existing.id,
					ipAddress: currentClientAddress(),
					details: { sent: true }
				});
				return true;
			}
			return Boolean(usable);
		},
		async jwt({ token, user }) {
			if (user?.id) {
				const u = await User.findByPk(user.id);
				token.sub = user.id;
				token.sv = u?.sessionVersion ?? 0;
			}
			return token;
		},
		async session({ session, token }) {
			return { ...session, userId: token.sub, sessionVersion: token.sv } as typeof session;
		}
	},
	events: {
		async signIn({ user, account }) {
			await record({
				action: 'auth.sign-in',
				actorLabel: user.email ?? 'unknown',
				actorUserId: user.id ?? null,
				ipAddress: currentClientAddress(),
				details: { method: account?.provider === 'nodemailer' ? 'e-mail link' : 'password' }
			});
		}
	},
	logger: {
		error: (e) => {
			if (!(e instanceof CredentialsSignin)) console.error('[auth]', e.message);
		},
		warn: () => {}
	}
}));

export { LIMITS };
