// People and their accounts: what the account pages and the people pages change, each change audited.
import { Op, fn, col, type Transaction, type WhereOptions } from 'sequelize';
import { db } from '../db/index';
import { OneTimeToken, Study, StudyMember, User, type StudyRole } from '../db/models';
import { isUuid, may, type Actor } from '../access/guard';
import { linkBase, type RequestContext } from '../access/context';
import { FormProblem, notFound, type FieldErrors } from '../errors';
import { record } from '../audit/record';
import { currentLab } from '../studies/lab';
import { sendMail } from '../mail/index';
import { hashPassword, passwordProblem } from '../auth/password';
import { consume, inspectToken, issueToken, LINK_REFUSED_MESSAGE, TOKEN_LIFETIME_MS, type TokenRefusal } from '../auth/tokens';
import {
	PEOPLE_PER_PAGE,
	PEOPLE_SORTS,
	type PeoplePage,
	type PeopleQuery,
	type PeopleSort,
	type PersonSummary,
	type RoleHeld,
	type StudyChoice
} from '../../types/people';

/** Every session of the account stops working at its next request (they carry the old version number). */
export async function signOutEverywhere(userId: string, transaction?: Transaction): Promise<void> {
	await User.increment('sessionVersion', { where: { id: userId }, transaction });
}

export const STUDY_ROLES: readonly StudyRole[] = ['pi', 'researcher', 'technician'];
/** The words the UI uses for each study role. */
export const ROLE_LABELS: Record<StudyRole, string> = { pi: 'principal investigator', researcher: 'researcher', technician: 'technician' };

/** A link that cannot be used; `reason` goes to the audit log, people see one message. */
export interface LinkRefused {
	refused: TokenRefusal | 'account-deactivated';
}

const EMAIL = /^[^\s@]+@[^\s@]+\.[^\s@]+$/;
export const NAME_MAX = 200;

/** What a form posted, field by field (Object.fromEntries of its FormData); anything not text reads as empty. */
export type FormInput = Record<string, unknown>;
const text = (input: FormInput, field: string) => (typeof input[field] === 'string' ? (input[field] as string) : '');

/** The answer for a person id that is malformed, unknown or gone. */
export const NO_SUCH_PERSON = 'There is no such person in this lab. Find them in the people list.';

/** What is wrong with an e-mail address typed into a form, or null. */
export function emailProblem(email: string, whose = 'the person’s'): string | null {
	if (!email) return `Enter ${whose} e-mail address.`;
	if (email.length > 254) return 'An e-mail address has at most 254 characters.';
	if (!EMAIL.test(email)) return `“${email}” is not an e-mail address: it needs one @ followed by a domain, e.g. name@lab.example.`;
	return null;
}

function assertManager(actor: Actor): void {
	// the routes call requireLab() first; this is the second lock on the same door
	if (!may(actor, 'people.manage')) throw new FormProblem({ form: 'Only a lab administrator can manage people.' }, 'forbidden');
}

const days = (ms: number) => Math.round(ms / 86_400_000);
const minutes = (ms: number) => Math.round(ms / 60_000);

// ---------------------------------------------------------------------------------------------- list and read

/** Reads ?q=&sort=&dir=&page= leniently: anything unknown falls back to the default. */
export function parsePeopleQuery(params: URLSearchParams): PeopleQuery {
	const q = (params.get('q') ?? '').trim().slice(0, 200);
	const s = params.get('sort');
	const sort: PeopleSort = (PEOPLE_SORTS as readonly string[]).includes(s ?? '') ? (s as PeopleSort) : 'name';
	const dir = params.get('dir') === 'desc' ? 'desc' : 'asc';
	const n = Number.parseInt(params.get('page') ?? '1', 10);
	return { q, sort, dir, page: Number.isFinite(n) && n > 0 ? n : 1 };
}

const escapeLike = (s: string) => s.replace(/[\\%_]/g, (c) => `\\${c}`);

async function rolesOf(userIds: string[], transaction?: Transaction): Promise<Map<string, RoleHeld[]>> {
	const out = new Map<string, RoleHeld[]>(userIds.map((id) => [id, []]));
	if (!userIds.length) return out;
	const members = await StudyMember.findAll({ where: { userId: userIds }, include: [Study], transaction });
	for (const m of members) {
		const study = m.Study!;
		out.get(m.userId)?.push({ studyId: m.studyId, code: study.code, title: study.title, role: m.role });
	}
	for (const list of out.values()) list.sort((a, b) => a.code.localeCompare(b.code));
	return out;
}

function summary(u: User, roles: RoleHeld[]): PersonSummary {
	return {
		id: u.id,
		name: u.name,
		email: u.email,
		isAdmin: u.isAdmin,
		deactivatedAt: u.deactivatedAt ?? null,
		invitationPending: !u.emailVerified && !u.passwordHash,
		createdAt: u.createdAt,
		roles
	};
}

/** One page of people matching `q` (name or e-mail, any case), in the asked order. */
export async function listPeople(actor: Actor, query: PeopleQuery): Promise<PeoplePage> {
	assertManager(actor);
	const where: WhereOptions = query.q
		? { [Op.or]: [{ name: { [Op.iLike]: `%${escapeLike(query.q)}%` } }, { email: { [Op.iLike]: `%${escapeLike(query.q)}%` } }] }
		: {};
	const dir = query.dir.toUpperCase() as 'ASC' | 'DESC';
	// a stable order (ties broken by e-mail, then id) keeps a person from appearing on two pages
	const order =
		query.sort === 'name'
			? [
					[fn('lower', col('name')), `${dir} NULLS LAST`],
					['email', 'ASC'],
					['id', 'ASC']
				]
			: query.sort === 'email'
				? [
						['email', dir],
						['id', 'ASC']
					]
				: [
						['createdAt', dir],
						['email', 'ASC'],
						['id', 'ASC']
					];
	const total = await User.count({ where });
	const pageCount = Math.max(1, Math.ceil(total / PEOPLE_PER_PAGE));
	const page = Math.min(query.page, pageCount);
	const users = await User.findAll({ where, order: order as never, limit: PEOPLE_PER_PAGE, offset: (page - 1) * PEOPLE_PER_PAGE });
	const roles = await rolesOf(users.map((u) => u.id));
	return {
		query: { ...query, page },
		people: users.map((u) => summary(u, roles.get(u.id) ?? [])),
		total,
		pageCount,
		perPage: PEOPLE_PER_PAGE
	};
}

/** Every study, for the role pickers. */
export async function listStudies(actor: Actor): Promise<StudyChoice[]> {
	assertManager(actor);
	const studies = await Study.findAll({ order: [['code', 'ASC']] });
	return studies.map((s) => ({ id: s.id, code: s.code, title: s.title }));
}

/** One person with their roles; not-found when there is no such person. */
export async function getPerson(actor: Actor, id: string): Promise<PersonSummary> {
	assertManager(actor);
	const u = isUuid(id) ? await User.findByPk(id) : null;
	if (!u) throw notFound(NO_SUCH_PERSON);
	return summary(u, (await rolesOf([u.id])).get(u.id) ?? []);
}

// ---------------------------------------------------------------------------------------------- changes by an administrator

async function lockedPerson(id: string, transaction: Transaction): Promise<User> {
	const u = isUuid(id) ? await User.findByPk(id, { transaction, lock: transaction.LOCK.UPDATE }) : null;
	if (!u) throw notFound(NO_SUCH_PERSON);
	return u;
}

/** Reads a study role field: '' means "no role in this study". */
export function parseRole(value: unknown, studyCode: string, field: string): StudyRole | null {
	const v = typeof value === 'string' ? value : '';
	if (v === '') return null;
	if (!(STUDY_ROLES as readonly string[]).includes(v)) {
		throw new FormProblem({ [field]: `Choose a role for ${studyCode} from the list (or “no role”).` });
	}
	return v as StudyRole;
}

async function applyRole(
	userId: string,
	study: Study,
	role: StudyRole | null,
	transaction: Transaction
): Promise<{ before: StudyRole | null; after: StudyRole | null }> {
	const member = await StudyMember.findOne({ where: { userId, studyId: study.id }, transaction, lock: transaction.LOCK.UPDATE });
	const before = member?.role ?? null;
	if (before === role) return { before, after: role };
	if (!role) await member!.destroy({ transaction });
	else if (member) await member.update({ role }, { transaction });
	else await StudyMember.create({ userId, studyId: study.id, role }, { transaction });
	return { before, after: role };
}

/** Gives, changes or (role null) removes a person's role in one study. Returns false when nothing changed. */
export async function setStudyRole(
	actor: Actor,
	ctx: RequestContext,
	userId: string,
	studyId: string,
	role: StudyRole | null
): Promise<boolean> {
	assertManager(actor);
	return db().transaction(async (transaction) => {
		const person = await lockedPerson(userId, transaction);
		const study = isUuid(studyId) ? await Study.findByPk(studyId, { transaction }) : null;
		if (!study) throw new FormProblem({ studyId: 'That study does not exist (any more). Reload the page and choose again.' });
		const { before, after } = await applyRole(person.id, study, role, transaction);
		if (before === after) return false;
		await record(
			{
				action: 'people.role-changed',
				actorUserId: actor.id,
				actorLabel: actor.email,
				studyId: study.id,
				recordType: 'user',
				recordId: person.id,
				ipAddress: ctx.ipAddress,
				details: { email: person.email, study: study.code, before, after }
			},
			transaction
		);
		return true;
	});
}

/** Makes a person a lab administrator or takes the role away; nobody can take it from themselves. */
export async function setLabAdmin(actor: Actor, ctx: RequestContext, userId: string, isAdmin: boolean): Promise<boolean> {
	assertManager(actor);
	if (userId === actor.id && !isAdmin) {
		throw new FormProblem(
			{ isAdmin: 'You cannot remove your own lab administrator role. Ask another administrator to do it.' },
			'conflict'
		);
	}
	return db().transaction(async (transaction) => {
		const person = await lockedPerson(userId, transaction);
		if (person.isAdmin === isAdmin) return false;
		await person.update({ isAdmin }, { transaction });
		await record(
			{
				action: 'people.admin-changed',
				actorUserId: actor.id,
				actorLabel: actor.email,
				recordType: 'user',
				recordId: person.id,
				ipAddress: ctx.ipAddress,
				details: { email: person.email, before: !isAdmin, after: isAdmin }
			},
			transaction
		);
		return true;
	});
}

/**
 * Deactivates an account: it can no longer sign in and its sessions end at their next request.
 * Its records, roles and audit trail stay as they are. Nobody can deactivate themselves.
 */
export async function deactivatePerson(actor: Actor, ctx: RequestContext, userId: string): Promise<void> {
	assertManager(actor);
	if (userId === actor.id)
		throw new FormProblem({ form: 'You cannot deactivate your own account. Ask another administrator to do it.' }, 'conflict');
	await db().transaction(async (transaction) => {
		const person = await lockedPerson(userId, transaction);
		if (person.deactivatedAt) throw new FormProblem({ form: `${person.email} is already deactivated.` }, 'conflict');
		await person.update({ deactivatedAt: new Date(), sessionVersion: person.sessionVersion + 1 }, { transaction });
		await record(
			{
				action: 'people.deactivated',
				actorUserId: actor.id,
				actorLabel: actor.email,
				recordType: 'user',
				recordId: person.id,
				ipAddress: ctx.ipAddress,
				details: { email: person.email }
			},
			transaction
		);
	});
}

/** Lets a deactivated account sign in again (with its old password or an e-mailed link). */
export async function reactivatePerson(actor: Actor, ctx: RequestContext, userId: string): Promise<void> {
	assertManager(actor);
	await db().transaction(async (transaction) => {
		const person = await lockedPerson(userId, transaction);
		if (!person.deactivatedAt) throw new FormProblem({ form: `${person.email} is already active.` }, 'conflict');
		const since = person.deactivatedAt;
		await person.update({ deactivatedAt: null }, { transaction });
		await record(
			{
				action: 'people.reactivated',
				actorUserId: actor.id,
				actorLabel: actor.email,
				recordType: 'user',
				recordId: person.id,
				ipAddress: ctx.ipAddress,
				details: { email: person.email, deactivatedAt: since.toISOString() }
			},
			transaction
		);
	});
}

// ---------------------------------------------------------------------------------------------- invitations

export interface InvitationInput {
	email: string;
	name: string | null;
	/** studyId → role; studies left out are not touched. */
	roles: Map<string, StudyRole>;
}

/** Reads the invitation form (fields email, name, role-<studyId>); throws FormProblem naming each wrong field. */
export function parseInvitation(input: FormInput, studies: StudyChoice[]): InvitationInput {
	const errors: FieldErrors = {};
	const email = text(input, 'email').trim().toLowerCase();
	const name = text(input, 'name').trim();
	const ep = emailProblem(email);
	if (ep) errors.email = ep;
	if (name.length > NAME_MAX) errors.name = `Use at most ${NAME_MAX} characters for the name (this one has ${name.length}).`;
	const roles = new Map<string, StudyRole>();
	for (const s of studies) {
		const field = `role-${s.id}`;
		try {
			const role = parseRole(input[field], s.code, field);
			if (role) roles.set(s.id, role);
		} catch (err) {
			Object.assign(errors, (err as FormProblem).errors);
		}
	}
	if (Object.keys(errors).length) throw new FormProblem(errors);
	return { email, name: name || null, roles };
}

/**
 * Invites a person: creates the account when the address is new (no password), gives the chosen study roles,
 * and e-mails a single-use link. If the e-mail cannot be sent nothing is kept, so the administrator can retry.
 */
export async function invitePerson(
	actor: Actor,
	ctx: RequestContext,
	input: InvitationInput
): Promise<{ userId: string; created: boolean }> {
	assertManager(actor);
	const lab = await currentLab();
	return db().transaction(async (transaction) => {
		let person = await User.findOne({ where: { email: input.email }, transaction, lock: transaction.LOCK.UPDATE });
		if (person?.deactivatedAt) {
			throw new FormProblem(
				{ email: `${input.email} belongs to a deactivated account. Reactivate it on that person’s page, then invite them again.` },
				'conflict'
			);
		}
		const created = !person;
		if (!person) person = await User.create({ email: input.email, name: input.name, emailVerified: null }, { transaction });
		else if (input.name && !person.name) await person.update({ name: input.name }, { transaction });

		const changes: { study: string; before: StudyRole | null; after: StudyRole | null }[] = [];
		const held: string[] = [];
		for (const [studyId, role] of input.roles) {
			const study = await Study.findByPk(studyId, { transaction });
			if (!study) throw new FormProblem({ [`role-${studyId}`]: 'That study does not exist (any more). Reload the page and choose again.' });
			const change = await applyRole(person.id, study, role, transaction);
			if (change.before !== change.after) changes.push({ study: study.code, ...change });
			held.push(`${study.code}: ${ROLE_LABELS[role]}`);
		}

		const token = await issueToken('invitation', person.id, transaction);
		await record(
			{
				action: 'people.invited',
				actorUserId: actor.id,
				actorLabel: actor.email,
				recordType: 'user',
				recordId: person.id,
				ipAddress: ctx.ipAddress,
				details: { email: person.email, newAccount: created, roles: changes }
			},
			transaction
		);

		const link = `${linkBase(ctx)}/invitation/${token}`;
		const where = lab ? ` at ${lab.name}` : '';
		try {
			await sendMail({
				to: person.email,
				subject: `You are invited to Momentry${where}`,
				text:
					`${actor.name ?? actor.email} has invited you to use Momentry${where}.\n` +
					(held.length ? `Your study roles: ${held.join(', ')}.\n` : '') +
					`\nOpen this link within ${days(TOKEN_LIFETIME_MS.invitation)} days to confirm your name and, if you like, choose a password. It works once.\n\n${link}\n\n` +
					`Without a password you sign in with a link e-mailed to you each time.\nIf you were not expecting this invitation, ignore this e-mail.`
			});
		} catch (err) {
			throw new FormProblem(
				{
					form: `The invitation e-mail to ${person.email} could not be sent (${(err as Error).message}). Nothing was saved; try again, or check the mail server on the status page.`
				},
				'upstream'
			);
		}
		return { userId: person.id, created };
	});
}

/** Whom an invitation link is for, or why it cannot be used. */
export async function invitationFor(token: string): Promise<{ email: string; name: string | null; hasPassword: boolean } | LinkRefused> {
	const check = await inspectToken('invitation', token);
	if (!check.ok) return { refused: check.reason };
	const u = await User.findByPk(check.userId);
	if (!u || u.deactivatedAt) return { refused: 'account-deactivated' };
	return { email: u.email, name: u.name, hasPassword: Boolean(u.passwordHash) };
}

/** Reads a new password and its repetition; an empty password is allowed only when `optional`. */
function parseNewPassword(input: FormInput, optional: boolean, errors: FieldErrors): string | null {
	const password = text(input, 'password');
	const again = text(input, 'passwordAgain');
	if (!password && optional && !again) return null;
	if (!password) {
		errors.password = 'Enter a new password.';
		return null;
	}
	const p = passwordProblem(password);
	if (p) errors.password = p;
	else if (password !== again) errors.passwordAgain = 'The two passwords differ. Type the same password in both fields.';
	return password;
}

/** A link that cannot be used, once its refusal is in the audit log: gone, with the one message people see. */
const linkGone = () => new FormProblem({ form: LINK_REFUSED_MESSAGE }, 'gone');

async function linkRefused(
	action: string,
	reason: LinkRefused['refused'],
	ctx: RequestContext,
	userId: string | null,
	transaction?: Transaction
): Promise<LinkRefused> {
	await record(
		{
			action,
			actorUserId: userId,
			actorLabel: 'e-mailed link',
			outcome: 'denied',
			recordType: 'user',
			recordId: userId,
			ipAddress: ctx.ipAddress,
			details: { reason }
		},
		transaction
	);
	return { refused: reason };
}

/**
 * Accepts an invitation: saves the name, the password if one was chosen, and that the address is confirmed.
 * A link that cannot be used is audited and answered as gone.
 */
export async function acceptInvitation(
	ctx: RequestContext,
	token: string,
	input: FormInput
): Promise<{ email: string; passwordSet: boolean }> {
	const errors: FieldErrors = {};
	const name = text(input, 'name').trim();
	if (!name) errors.name = 'Enter your name as your colleagues should see it.';
	else if (name.length > NAME_MAX) errors.name = `Use at most ${NAME_MAX} characters for your name (this one has ${name.length}).`;
	const password = parseNewPassword(input, true, errors);
	// a refused link matters more than a mistyped field: say that first
	const peek = await inspectToken('invitation', token);
	if (!peek.ok) {
		await linkRefused('people.invitation-accepted', peek.reason, ctx, null);
		throw linkGone();
	}
	if (Object.keys(errors).length) throw new FormProblem(errors);
	// argon2 is deliberately slow: hash before the transaction takes its locks
	const passwordHash = password ? await hashPassword(password) : null;
	const outcome = await db().transaction(async (transaction): Promise<{ email: string; passwordSet: boolean } | LinkRefused> => {
		const used = await consume('invitation', token, transaction);
		if (!used.ok) return linkRefused('people.invitation-accepted', used.reason, ctx, null, transaction);
		const person = await User.findByPk(used.userId, { transaction, lock: transaction.LOCK.UPDATE });
		if (!person || person.deactivatedAt)
			return linkRefused('people.invitation-accepted', 'account-deactivated', ctx, used.userId, transaction);
		await person.update(
			{ name, emailVerified: person.emailVerified ?? new Date(), ...(passwordHash ? { passwordHash } : {}) },
			{ transaction }
		);
		await record(
			{
				action: 'people.invitation-accepted',
				actorUserId: person.id,
				actorLabel: person.email,
				recordType: 'user',
				recordId: person.id,
				ipAddress: ctx.ipAddress,
				details: { passwordSet: Boolean(passwordHash) }
			},
			transaction
		);
		return { email: person.email, passwordSet: Boolean(passwordHash) };
	});
	if ('refused' in outcome) throw linkGone();
	return outcome;
}

// ---------------------------------------------------------------------------------------------- password reset

/** At most this many reset e-mails per account and hour, so the form cannot flood someone's inbox. */
export const RESETS_PER_HOUR = 3;

/**
 * E-mails a password-reset link when `email` belongs to an account that can sign in. Says nothing either way:
 * callers answer the same page whatever happened, and may leave this running so timing tells nothing either.
 */
export async function requestPasswordReset(ctx: RequestContext, email: string): Promise<void> {
	const address = email.trim().toLowerCase();
	const person = await User.findOne({ where: { email: address } });
	const refuse = (reason: string) =>
		record({
			action: 'auth.password-reset-requested',
			actorUserId: person?.id ?? null,
			actorLabel: address,
			outcome: 'denied',
			ipAddress: ctx.ipAddress,
			details: { reason }
		});
	if (!person) return void (await refuse('no such account'));
	if (person.deactivatedAt) return void (await refuse('deactivated'));
	const recent = await OneTimeToken.count({
		where: { userId: person.id, purpose: 'password-reset', createdAt: { [Op.gt]: new Date(Date.now() - 3600_000) } }
	});
	if (recent >= RESETS_PER_HOUR) return void (await refuse('too many requests'));

	await db().transaction(async (transaction) => {
		const token = await issueToken('password-reset', person.id, transaction);
		await record(
			{
				action: 'auth.password-reset-requested',
				actorUserId: person.id,
				actorLabel: person.email,
				ipAddress: ctx.ipAddress,
				details: { sent: true }
			},
			transaction
		);
		await sendMail({
			to: person.email,
			subject: 'Reset your Momentry password',
			text:
				`Someone, probably you, asked to reset the password of your Momentry account (${person.email}).\n\n` +
				`Open this link within ${minutes(TOKEN_LIFETIME_MS['password-reset'])} minutes to choose a new password. It works once, and signs you out on every device.\n\n` +
				`${linkBase(ctx)}/reset-password/${token}\n\n` +
				`If you did not ask for this, ignore this e-mail: your password stays as it is.`
		});
	});
}

/** Whether a reset link can still be used (for the page it opens). */
export async function resetLinkFor(token: string): Promise<{ email: string } | LinkRefused> {
	const check = await inspectToken('password-reset', token);
	if (!check.ok) return { refused: check.reason };
	const u = await User.findByPk(check.userId);
	if (!u || u.deactivatedAt) return { refused: 'account-deactivated' };
	return { email: u.email };
}

/** Sets a new password from a reset link and ends every session of the account (a refused link: gone, audited). */
export async function resetPassword(ctx: RequestContext, token: string, input: FormInput): Promise<{ email: string }> {
	const errors: FieldErrors = {};
	const password = parseNewPassword(input, false, errors);
	const peek = await inspectToken('password-reset', token);
	if (!peek.ok) {
		await linkRefused('auth.password-reset', peek.reason, ctx, null);
		throw linkGone();
	}
	if (Object.keys(errors).length || !password) throw new FormProblem(errors);
	const passwordHash = await hashPassword(password);
	const outcome = await db().transaction(async (transaction): Promise<{ email: string } | LinkRefused> => {
		const used = await consume('password-reset', token, transaction);
		if (!used.ok) return linkRefused('auth.password-reset', used.reason, ctx, null, transaction);
		const person = await User.findByPk(used.userId, { transaction, lock: transaction.LOCK.UPDATE });
		if (!person || person.deactivatedAt) return linkRefused('auth.password-reset', 'account-deactivated', ctx, used.userId, transaction);
		await person.update(
			{ passwordHash, sessionVersion: person.sessionVersion + 1, emailVerified: person.emailVerified ?? new Date() },
			{ transaction }
		);
		await record(
			{
				action: 'auth.password-reset',
				actorUserId: person.id,
				actorLabel: person.email,
				recordType: 'user',
				recordId: person.id,
				ipAddress: ctx.ipAddress,
				details: { signedOutEverywhere: true }
			},
			transaction
		);
		return { email: person.email };
	});
	if ('refused' in outcome) throw linkGone();
	return outcome;
}
