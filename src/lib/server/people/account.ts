// The signed-in person's own account: what the account page shows, and changing one's password (audited).
import { db } from '../db/index';
import { User } from '../db/models';
import { requireActor, type Actor } from '../access/guard';
import type { RequestContext } from '../access/context';
import { FormProblem } from '../errors';
import { record } from '../audit/record';
import { hashPassword, passwordProblem, verifyPassword } from '../auth/password';
import { checkThrottle, recordFailure } from '../auth/rate-limit';
import { signOutEverywhere } from './manage';
import { enqueueMail } from '../jobs/queue';
import { rolesOf } from '../studies/studies';

export interface AccountOverview {
	name: string | null;
	email: string;
	isAdmin: boolean;
	hasPassword: boolean;
	roles: Awaited<ReturnType<typeof rolesOf>>;
}

export async function accountOverview(who: Actor | null): Promise<AccountOverview> {
	const actor = requireActor(who);
	const user = await User.findByPk(actor.id, { attributes: ['id', 'passwordHash'] });
	return {
		name: actor.name,
		email: actor.email,
		isAdmin: actor.isAdmin,
		hasPassword: Boolean(user?.passwordHash),
		roles: await rolesOf(actor)
	};
}

export type PasswordField = 'current' | 'next' | 'repeat';
export type PasswordProblems = Partial<Record<PasswordField, string>>;
export type PasswordChange = Record<PasswordField, string>;

/**
 * Sets a new password. The current one is required when the account has one (wrong guesses count towards the
 * sign-in limits, since it is the same secret). On success every session of the account, this one included, stops
 * working: the person signs in again with the new password. Throws a FormProblem naming what was wrong.
 */
export async function changePassword(who: Actor | null, ctx: RequestContext, input: PasswordChange): Promise<void> {
	const problems = await tryChangePassword(requireActor(who), ctx.ipAddress, input);
	if (problems) throw new FormProblem(problems);
}

async function tryChangePassword(actor: Actor, ip: string | null, input: PasswordChange): Promise<PasswordProblems | null> {
	const user = await User.findByPk(actor.id);
	if (!user) return { current: 'Your account could not be found. Sign in again.' };

	const problems: PasswordProblems = {};
	const weak = passwordProblem(input.next);
	if (weak) problems.next = weak;
	else if (input.next !== input.repeat) problems.repeat = 'The two new passwords differ: type the same password in both fields.';
	if (user.passwordHash && !input.current) problems.current = 'Enter your current password.';
	if (Object.keys(problems).length) return problems;

	if (user.passwordHash) {
		const throttle = await checkThrottle(user.email, ip);
		if (throttle.blocked) {
			await record({
				action: 'auth.password-changed',
				actorUserId: user.id,
				actorLabel: user.email,
				outcome: 'denied',
				ipAddress: ip,
				recordType: 'user',
				recordId: user.id,
				details: { reason: 'rate limited' }
			});
			return { current: `Too many wrong passwords. Wait ${throttle.retryAfterMinutes} minutes and try again.` };
		}
		if (!(await verifyPassword(user.passwordHash, input.current))) {
			await recordFailure(user.email, ip);
			await record({
				action: 'auth.password-changed',
				actorUserId: user.id,
				actorLabel: user.email,
				outcome: 'failed',
				ipAddress: ip,
				recordType: 'user',
				recordId: user.id,
				details: { reason: 'wrong current password' }
			});
			return {
				current:
					'That is not your current password. Check it and try again; if you have forgotten it, sign out and ask for a password reset.'
			};
		}
		if (input.current === input.next) return { next: 'The new password is the same as the current one: choose a different one.' };
	}

	const passwordHash = await hashPassword(input.next);
	// End the sessions first: if saving the password then failed, the person signs in again with the old one;
	// the other way round, old sessions could outlive a changed password.
	await signOutEverywhere(user.id);
	await db().transaction(async (transaction) => {
		await User.update({ passwordHash }, { where: { id: user.id }, transaction });
		await record(
			{
				action: 'auth.password-changed',
				actorUserId: user.id,
				actorLabel: user.email,
				ipAddress: ip,
				recordType: 'user',
				recordId: user.id,
				details: { hadPassword: Boolean(user.passwordHash), signedOutEverywhere: true }
			},
			transaction
		);
	});
	try {
		await enqueueMail({
			to: user.email,
			subject: 'Your Momentry password was changed',
			text: `The password of your Momentry account (${user.email}) was changed on ${new Date().toISOString().slice(0, 16).replace('T', ' ')} UTC, and every session was signed out.\n\nIf you did not do this, tell your lab administrator at once.`
		});
	} catch (err) {
		// the change stands without the notice; the audit log has it
		console.error('[account] could not queue the password-changed notice:', (err as Error).message);
	}
	return null;
}

/** Signing out is audited; "everywhere" also ends every other session of the account first. */
export async function signOutRecorded(actor: Actor | null, ctx: RequestContext, everywhere: boolean): Promise<void> {
	if (!actor) return;
	if (everywhere) await signOutEverywhere(actor.id);
	await record({
		action: everywhere ? 'auth.sign-out-everywhere' : 'auth.sign-out',
		actorUserId: actor.id,
		actorLabel: actor.email,
		ipAddress: ctx.ipAddress
	});
}
