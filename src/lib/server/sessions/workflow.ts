// The review workflow of a session: submit, approve (signed), return, reopen; its history, signing codes and e-mails.
import { conflict, FormProblem } from '../errors';
import { createHash, randomBytes, randomInt, timingSafeEqual } from 'node:crypto';
import { db } from '../db/index';
import { Participant, User, type Session, type SessionState } from '../db/models';
import { may, type Actor, type StudyAction } from '../access/guard';
import { linkBase, type RequestContext } from '../access/context';
import { requireValidConsent } from '../consent/check';
import { enqueueMail } from '../jobs/queue';
import { verifyPassword } from '../auth/password';
import { checkThrottle, recordFailure } from '../auth/rate-limit';
import { isLocked, lockedMessage } from './lock';
import { recordSession, studySession, type SessionRef } from './sessions';
import * as q from './queries';
import type { ApprovalView, HistoryRow, Transition, WorkflowView, WorkQueues } from '../../types/sessions';

export type { Transition, WorkQueues, WorkRow } from '../../types/sessions';

/** What the PI's signature on an approval means; shown in the form, ticked, and stored with the approval. */
export const SIGNATURE_MEANING = 'approved for analysis';
export const NOTE_MIN = 1;
export const NOTE_MAX = 2000;
export const CODE_MINUTES = 10;
/** Signing codes one person may ask for, per session, in CODE_WINDOW_MINUTES. */
export const CODE_REQUESTS = 5;
export const CODE_WINDOW_MINUTES = 15;

export const STATE_WORD: Record<SessionState, string> = {
	draft: 'draft',
	in_review: 'in review',
	returned: 'returned',
	approved: 'approved'
};

/** Each step: the permission it needs, the states it leaves from, where it goes, and the note it asks for. */
const STEPS: Record<Transition, { action: StudyAction; from: readonly SessionState[]; to: SessionState; field: string; label: string }> = {
	submit: { action: 'session.submit', from: ['draft', 'returned'], to: 'in_review', field: 'note', label: 'a summary for the PI' },
	approve: { action: 'session.approve', from: ['in_review'], to: 'approved', field: '', label: '' },
	return: { action: 'session.approve', from: ['in_review'], to: 'returned', field: 'comment', label: 'a comment saying what to change' },
	reopen: { action: 'session.reopen', from: ['approved'], to: 'returned', field: 'reason', label: 'the reason for reopening' }
};

const VERB: Record<Transition, string> = { submit: 'submitted', approve: 'approved', return: 'returned', reopen: 'reopened' };

/** Conflict naming the current state; an approved session answers with the lock's own message. */
function refuseState(step: Transition, state: SessionState): never {
	if (isLocked(state) && step !== 'reopen') throw conflict(lockedMessage);
	const allowed = STEPS[step].from.map((s) => STATE_WORD[s]).join(' or ');
	throw conflict(`This session is ${STATE_WORD[state]}; it can be ${VERB[step]} only while it is ${allowed}.`);
}

/** What a step's form posted: its fields by name (the route passes Object.fromEntries(form)). */
export type StepForm = Record<string, FormDataEntryValue | undefined>;
const text = (form: StepForm, name: string) => String(form[name] ?? '');

function noteOf(form: StepForm, step: Transition): string {
	const { field, label } = STEPS[step];
	const note = text(form, field).trim();
	if (note.length < NOTE_MIN) throw new FormProblem({ [field]: `Write ${label}; it is required.` });
	if (note.length > NOTE_MAX) throw new FormProblem({ [field]: `Keep it under ${NOTE_MAX} characters (it has ${note.length}).` });
	return note;
}

/** The person's password hash, or null for an account that signs in by e-mailed link only. */
async function passwordHashOf(userId: string): Promise<string | null> {
	return (await User.findByPk(userId, { attributes: ['passwordHash'] }))?.passwordHash || null;
}

const hashCode = (code: string, salt: string) => createHash('sha256').update(`${salt}:${code}`).digest('hex');

// ---------------------------------------------------------------------------------------------- reading

/** Every transition of the session, oldest first (the caller has checked access). */
export const sessionHistory = (sessionId: string): Promise<HistoryRow[]> => q.historyRows(sessionId);

/** The latest approval of a session that is approved now, or null. */
export const approvalOf = (sessionId: string): Promise<ApprovalView | null> => q.latestApproval(sessionId);

/** What the session page's workflow block needs. */
export async function workflowOf(actor: Actor | null, ctx: RequestContext, ref: SessionRef): Promise<WorkflowView> {
	const { actor: a, study, session: s } = await studySession(actor, ctx, 'study.read', ref);
	const passwordHash = await passwordHashOf(a.id);
	const pending = await q.pendingCodeExpiry(a.id, s.id);
	const can = (step: Transition) => may(a, STEPS[step].action, study.id) && STEPS[step].from.includes(s.state);
	return {
		state: s.state,
		locked: isLocked(s.state),
		history: await sessionHistory(s.id),
		approval: await approvalOf(s.id),
		doneRuns: await q.countDoneRuns(s.id),
		meaning: SIGNATURE_MEANING,
		hasPassword: passwordHash !== null,
		codeExpiresAt: pending ? pending.toISOString() : null,
		may: { submit: can('submit'), approve: can('approve'), return: can('return'), reopen: can('reopen') },
		noteMin: NOTE_MIN,
		noteMax: NOTE_MAX
	};
}

// ---------------------------------------------------------------------------------------------- signing

interface Signature {
	method: 'password' | 'email_code';
	/** for a code: the row to mark used inside the approval's transaction */
	codeId?: string;
}

async function signatureFailed(actor: Actor, ctx: RequestContext, studyId: string, sessionId: string, method: string, why: string) {
	await recordFailure(`signature:${actor.email}`, null);
	await recordSession(actor, ctx, 'session.signature-failed', { studyId, sessionId }, { method, why }, { outcome: 'failed' });
}

/** Checks the PI's password or e-mailed code; a wrong one is audited and counted, and refused on its field. */
async function checkSignature(actor: Actor, ctx: RequestContext, studyId: string, sessionId: string, form: StepForm): Promise<Signature> {
	const passwordHash = await passwordHashOf(actor.id);
	const hasPassword = passwordHash !== null;
	const field = hasPassword ? 'password' : 'code';
	const throttle = await checkThrottle(`signature:${actor.email}`, null);
	if (throttle.blocked)
		throw new FormProblem(
			{
				[field]: `Too many wrong signatures. Try again in ${throttle.retryAfterMinutes} minute${throttle.retryAfterMinutes === 1 ? '' : 's'}.`
			},
			'rate-limited'
		);
	if (hasPassword) {
		const password = text(form, 'password');
		if (!password) throw new FormProblem({ password: 'Enter your password to sign the approval.' });
		if (await verifyPassword(passwordHash!, password)) return { method: 'password' };
		await signatureFailed(actor, ctx, studyId, sessionId, 'password', 'wrong password');
		throw new FormProblem({ password: 'That is not your password. Nothing was approved; enter it again.' });
	}
	const code = text(form, 'code').replace(/\s+/g, '');
	if (!/^\d{6}$/.test(code))
		throw new FormProblem({ code: 'Enter the 6-digit code from the e-mail (ask for one with “E-mail me a code”).' });
	const rows = await q.usableCodes(actor.id, sessionId);
	const hit = rows.find((r) => timingSafeEqual(Buffer.from(hashCode(code, r.salt), 'hex'), Buffer.from(r.code_hash, 'hex')));
	if (hit) return { method: 'email_code', codeId: hit.id };
	await signatureFailed(
		actor,
		ctx,
		studyId,
		sessionId,
		'email_code',
		rows.length ? 'wrong code' : 'no valid code (used, expired or never sent)'
	);
	throw new FormProblem({
		code: rows.length
			? 'That code is not right. Nothing was approved; check the e-mail and enter it again.'
			: 'That code is used or has expired (codes last 10 minutes). Ask for a new one.'
	});
}

/** E-mails the PI a fresh 6-digit code for signing this session's approval (accounts without a password). */
export async function sendSignatureCode(actor: Actor | null, ctx: RequestContext, ref: SessionRef): Promise<{ expiresAt: string }> {
	const { actor: a, study, session: s } = await studySession(actor, ctx, 'session.approve', ref);
	if (s.state !== 'in_review') refuseState('approve', s.state);
	if ((await passwordHashOf(a.id)) !== null)
		throw new FormProblem({ code: 'Your account has a password: sign with your password instead.' }, 'conflict');
	if ((await q.countRecentCodes(a.id, s.id, CODE_WINDOW_MINUTES)) >= CODE_REQUESTS)
		throw new FormProblem(
			{ code: `You asked for ${CODE_REQUESTS} codes in ${CODE_WINDOW_MINUTES} minutes. Use the latest one, or wait a few minutes.` },
			'rate-limited'
		);
	const code = String(randomInt(0, 1_000_000)).padStart(6, '0');
	const salt = randomBytes(16).toString('hex');
	const participant = await participantCodeOf(s.participantId);
	const expiresAt = await db().transaction(async (transaction) => {
		// a new code replaces any earlier one for this session
		const expires = await q.replaceCode(a.id, s.id, hashCode(code, salt), salt, CODE_MINUTES, transaction);
		await recordSession(
			a,
			ctx,
			'session.signature-code-sent',
			{ studyId: study.id, sessionId: s.id },
			{ expiresAt: expires },
			{ transaction }
		);
		return expires;
	});
	await enqueueMail({
		to: a.email,
		subject: `Your code to sign the approval of ${study.code} ${participant}`,
		text:
			`Your code to sign the approval of the session of ${participant} on ${s.sessionOn} (study ${study.code}) is:\n\n    ${code}\n\n` +
			`It works once, for this session only, until ${expiresAt.toISOString().slice(11, 16)} UTC (${CODE_MINUTES} minutes). ` +
			`If you did not ask for it, ignore this e-mail and tell your lab administrator.\n\nThe session: ${sessionLink(ctx, study.id, s.id)}`
	});
	return { expiresAt: expiresAt.toISOString() };
}

// ---------------------------------------------------------------------------------------------- transitions

/** The session page's address for e-mails (the configured origin, else the request's). */
const sessionLink = (ctx: RequestContext, studyId: string, sessionId: string) =>
	`${linkBase(ctx)}/studies/${studyId}/sessions/${sessionId}`;

const participantCodeOf = async (participantId: string): Promise<string> =>
	(await Participant.findByPk(participantId, { attributes: ['code'] }))?.code ?? '';

/**
 * Moves the session one step. Order of refusals: access (forbidden/not-found), state (conflict), fields (invalid),
 * trials with a done run (submit, conflict), signature (approve, invalid); then, in one transaction with the session
 * row FOR UPDATE, the state is checked again, consent (approve), the change, its history row and its audit entry.
 * E-mails go out after commit.
 */
export async function transition(
	actor: Actor | null,
	ctx: RequestContext,
	input: SessionRef & { step: Transition; form: StepForm }
): Promise<{ to: SessionState }> {
	const { step, form } = input;
	const { actor: a, study, session: found } = await studySession(actor, ctx, STEPS[step].action, input);
	if (!STEPS[step].from.includes(found.state)) refuseState(step, found.state);
	let note: string | null = null;
	let signature: Signature | null = null;
	if (step === 'approve') {
		if (text(form, 'meaning') !== SIGNATURE_MEANING)
			throw new FormProblem({ meaning: `Tick the box to confirm that your signature means “${SIGNATURE_MEANING}”.` });
	} else {
		note = noteOf(form, step);
		if (form.confirm !== 'yes') throw new FormProblem({ confirm: 'Tick the box to confirm this step.' });
	}
	if (step === 'submit' && (await q.countDoneRuns(found.id)) === 0)
		throw conflict(
			'This session has no trial with a finished (done) run yet; upload a trial and run it before submitting the session for review.'
		);
	if (step === 'approve') signature = await checkSignature(a, ctx, study.id, found.id, form);

	const to = STEPS[step].to;
	const transitionId = await db().transaction(async (transaction) => {
		const from = await q.lockSessionState(found.id, transaction);
		if (!STEPS[step].from.includes(from)) refuseState(step, from);
		if (step === 'submit' && (await q.countDoneRuns(found.id, transaction)) === 0)
			throw conflict('This session has no trial with a finished (done) run yet.');
		if (step === 'approve') {
			await requireValidConsent(found.participantId, 'approval', transaction);
			if (signature?.codeId && !(await q.useCode(signature.codeId, transaction)))
				throw new FormProblem({ code: 'That code was used a moment ago. Ask for a new one.' });
		}
		await q.setSessionState(found.id, to, transaction);
		const id = await q.insertTransition(
			{
				sessionId: found.id,
				from,
				to,
				actorUserId: a.id,
				actorLabel: a.name?.trim() || a.email,
				note,
				meaning: signature ? SIGNATURE_MEANING : null,
				method: signature?.method ?? null
			},
			transaction
		);
		const details = {
			from,
			to,
			...(note ? { [STEPS[step].field]: note } : {}),
			...(signature ? { meaning: SIGNATURE_MEANING, method: signature.method } : {})
		};
		await recordSession(a, ctx, `session.${VERB[step]}`, { studyId: study.id, sessionId: found.id }, details, { transaction });
		return id;
	});
	try {
		await notify(ctx, step, found, study, a, note, transitionId);
	} catch (err) {
		// the step stands without its e-mail; the audit log and the work queues have it
		console.error('[workflow] could not queue the notification:', (err as Error).message);
	}
	return { to };
}

/** Submitted → the study's PIs; approved, returned or reopened → the person who last submitted it. */
async function notify(
	ctx: RequestContext,
	step: Transition,
	s: Session,
	study: { id: string; code: string },
	actor: Actor,
	note: string | null,
	transitionId: string
) {
	const link = sessionLink(ctx, study.id, s.id);
	const participant = await participantCodeOf(s.participantId);
	const who = actor.name ?? actor.email;
	const what = `the session of ${participant} on ${s.sessionOn} (study ${study.code})`;
	const to =
		step === 'submit' ? await q.piEmails(study.id, actor.id) : (await q.lastSubmitterEmails(s.id)).filter((e) => e !== actor.email);
	const subject: Record<Transition, string> = {
		submit: `For your approval: ${study.code} ${participant}, session ${s.sessionOn}`,
		approve: `Approved: ${study.code} ${participant}, session ${s.sessionOn}`,
		return: `Returned with a comment: ${study.code} ${participant}, session ${s.sessionOn}`,
		reopen: `Reopened: ${study.code} ${participant}, session ${s.sessionOn}`
	};
	const body: Record<Transition, string> = {
		submit: `${who} submitted ${what} for your approval.\n\nTheir summary:\n${note}\n\nReview it, then approve or return it:\n${link}`,
		approve: `${who} approved ${what}, signing it as “${SIGNATURE_MEANING}”. The session is now locked.\n\n${link}`,
		return: `${who} returned ${what} to you with this comment:\n${note}\n\nMake the changes, then submit it again:\n${link}`,
		reopen: `${who} reopened ${what}, which was approved, for this reason:\n${note}\n\nIt can be changed again; submit it once it is ready:\n${link}`
	};
	for (const address of to)
		await enqueueMail({ to: address, subject: subject[step], text: body[step] }, `session-transition ${transitionId} ${address}`);
}

// ---------------------------------------------------------------------------------------------- work queues

/** The signed-in person's work by role: sessions to approve (PI), returned sessions (researcher), recordings to do (technician). */
export async function workQueuesOf(actor: Actor, limit = 50): Promise<WorkQueues> {
	const studiesAs = (role: string) => [...actor.roles].filter(([, r]) => r === role).map(([id]) => id);
	const pi = studiesAs('pi');
	const researcher = studiesAs('researcher');
	const technician = studiesAs('technician');
	const [approve, returned, recordings] = await Promise.all([
		q.workQueue('approve', pi, limit),
		q.workQueue('returned', researcher, limit),
		q.workQueue('recordings', technician, limit)
	]);
	return {
		approve,
		returned,
		recordings,
		roles: { pi: pi.length > 0, researcher: researcher.length > 0, technician: technician.length > 0 },
		total: approve.length + returned.length + recordings.length
	};
}
