// The review workflow of a session: submit, approve (signed), return, reopen; its history, signing codes and e-mails.
import { FormProblem } from '../errors';
import { contextOf } from '../http/edge';
import type { RequestEvent } from '@sveltejs/kit';
import { error } from '@sveltejs/kit';
import { createHash, randomBytes, randomInt, timingSafeEqual } from 'node:crypto';
import { QueryTypes, type Transaction } from 'sequelize';
import { db } from '../db/index';
import { User, type Session, type SessionState } from '../db/models';
import { may, type Actor, type StudyAction } from '../access/guard';
import { record } from '../audit/record';
import { config } from '../config';
import { requireValidConsent } from '../consent/check';
import { enqueueMail } from '../jobs/queue';
import { verifyPassword } from '../auth/password';
import { checkThrottle, recordFailure } from '../auth/rate-limit';
import { isLocked, lockedMessage } from './lock';
import { sessionIn } from './sessions';
import { guardStudy } from '../studies/records';

/** What the PI's signature on an approval means; shown in the form, ticked, and stored with the approval. */
export const SIGNATURE_MEANING = 'approved for analysis';
export const NOTE_MIN = 1;
export const NOTE_MAX = 2000;
export const CODE_MINUTES = 10;
/** Signing codes one person may ask for, per session, in CODE_WINDOW_MINUTES. */
export const CODE_REQUESTS = 5;
export const CODE_WINDOW_MINUTES = 15;

export type Transition = 'submit' | 'approve' | 'return' | 'reopen';

export const STATE_WORD: Record<SessionState, string> = { draft: 'draft', in_review: 'in review', returned: 'returned', approved: 'approved' };

/** Each step: the permission it needs, the states it leaves from, where it goes, and the note it asks for. */
const STEPS: Record<Transition, { action: StudyAction; from: readonly SessionState[]; to: SessionState; field: string; label: string }> = {
	submit: { action: 'session.submit', from: ['draft', 'returned'], to: 'in_review', field: 'note', label: 'a summary for the PI' },
	approve: { action: 'session.approve', from: ['in_review'], to: 'approved', field: '', label: '' },
	return: { action: 'session.approve', from: ['in_review'], to: 'returned', field: 'comment', label: 'a comment saying what to change' },
	reopen: { action: 'session.reopen', from: ['approved'], to: 'returned', field: 'reason', label: 'the reason for reopening' }
};

const VERB: Record<Transition, string> = { submit: 'submitted', approve: 'approved', return: 'returned', reopen: 'reopened' };

/** 409 naming the current state; an approved session answers with the lock's own message. */
function refuseState(step: Transition, state: SessionState): never {
	if (isLocked(state) && step !== 'reopen') error(409, lockedMessage);
	const allowed = STEPS[step].from.map((s) => STATE_WORD[s]).join(' or ');
	error(409, `This session is ${STATE_WORD[state]}; it can be ${VERB[step]} only while it is ${allowed}.`);
}

function noteOf(form: FormData, step: Transition): string {
	const { field, label } = STEPS[step];
	const text = String(form.get(field) ?? '').trim();
	if (text.length < NOTE_MIN) throw new FormProblem({ [field]: `Write ${label}; it is required.` });
	if (text.length > NOTE_MAX) throw new FormProblem({ [field]: `Keep it under ${NOTE_MAX} characters (it has ${text.length}).` });
	return text;
}

/** The person's password hash, or null for an account that signs in by e-mailed link only. */
async function passwordHashOf(userId: string): Promise<string | null> {
	return (await User.findByPk(userId, { attributes: ['passwordHash'] }))?.passwordHash || null;
}

const hashCode = (code: string, salt: string) => createHash('sha256').update(`${salt}:${code}`).digest('hex');

// ---------------------------------------------------------------------------------------------- reading

export interface HistoryRow {
	at: string;
	from: string | null;
	to: string;
	actorName: string;
	note: string | null;
	meaning: string | null;
	method: string | null;
}

/** Every transition of the session, oldest first (the caller has checked access). */
export async function sessionHistory(sessionId: string): Promise<HistoryRow[]> {
	const rows = await db().query<{ at: Date; from_state: string | null; to_state: string; actor: string; note: string | null; signature_meaning: string | null; signature_method: string | null }>(
		`SELECT t.at, t.from_state, t.to_state, coalesce(u.name, t.actor_label) AS actor, t.note, t.signature_meaning, t.signature_method
		 FROM session_transitions t LEFT JOIN users u ON u.id = t.actor_user_id WHERE t.session_id = :sessionId ORDER BY t.at, t.id`,
		{ replacements: { sessionId }, type: QueryTypes.SELECT }
	);
	return rows.map((r) => ({ at: new Date(r.at).toISOString(), from: r.from_state, to: r.to_state, actorName: r.actor, note: r.note, meaning: r.signature_meaning, method: r.signature_method }));
}

/** The latest approval of a session that is approved now, or null. */
export async function approvalOf(sessionId: string): Promise<{ approvedAt: string; approverName: string; meaning: string } | null> {
	const rows = await db().query<{ at: Date; actor: string; meaning: string }>(
		`SELECT t.at, coalesce(u.name, t.actor_label) AS actor, t.signature_meaning AS meaning
		 FROM session_transitions t JOIN sessions s ON s.id = t.session_id LEFT JOIN users u ON u.id = t.actor_user_id
		 WHERE t.session_id = :sessionId AND s.state = 'approved' AND t.to_state = 'approved' ORDER BY t.at DESC, t.id DESC LIMIT 1`,
		{ replacements: { sessionId }, type: QueryTypes.SELECT }
	);
	return rows[0] ? { approvedAt: new Date(rows[0].at).toISOString(), approverName: rows[0].actor, meaning: rows[0].meaning } : null;
}

/** Done runs that count for a review (excluded ones after a withdrawal do not). */
async function doneRuns(sessionId: string, transaction?: Transaction): Promise<number> {
	const rows = await db().query<{ n: string }>(
		`SELECT count(*) AS n FROM runs r JOIN trials t ON t.id = r.trial_id WHERE t.session_id = :sessionId AND r.state = 'done' AND r.flag_decision IS DISTINCT FROM 'exclude'`,
		{ replacements: { sessionId }, type: QueryTypes.SELECT, transaction }
	);
	return Number(rows[0]?.n ?? 0);
}

/** What the session page's workflow block needs. */
export async function workflowOf(event: RequestEvent, rawId: string, rawSid: string) {
	const { actor, study } = await guardStudy(event, 'study.read', rawId);
	const s = await sessionIn(study.id, rawSid);
	const passwordHash = await passwordHashOf(actor.id);
	const pending = await db().query<{ expires_at: Date }>(
		`SELECT expires_at FROM signature_codes WHERE user_id = :u AND session_id = :s AND used_at IS NULL AND expires_at > now() ORDER BY created_at DESC LIMIT 1`,
		{ replacements: { u: actor.id, s: s.id }, type: QueryTypes.SELECT }
	);
	const can = (step: Transition) => may(actor, STEPS[step].action, study.id) && STEPS[step].from.includes(s.state);
	return {
		state: s.state,
		locked: isLocked(s.state),
		history: await sessionHistory(s.id),
		approval: await approvalOf(s.id),
		doneRuns: await doneRuns(s.id),
		meaning: SIGNATURE_MEANING,
		hasPassword: passwordHash !== null,
		codeExpiresAt: pending[0] ? new Date(pending[0].expires_at).toISOString() : null,
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

async function signatureFailed(event: RequestEvent, actor: Actor, studyId: string, sessionId: string, method: string, why: string) {
	await recordFailure(`signature:${actor.email}`, null);
	await record({
		action: 'session.signature-failed',
		actorUserId: actor.id,
		actorLabel: actor.email,
		outcome: 'failed',
		studyId,
		recordType: 'session',
		recordId: sessionId,
		ipAddress: contextOf(event).ipAddress,
		details: { method, why }
	});
}

/** Checks the PI's password or e-mailed code; a wrong one is audited and counted, and answers 400 on its field. */
async function checkSignature(event: RequestEvent, actor: Actor, studyId: string, sessionId: string, form: FormData): Promise<Signature> {
	const passwordHash = await passwordHashOf(actor.id);
	const hasPassword = passwordHash !== null;
	const field = hasPassword ? 'password' : 'code';
	const throttle = await checkThrottle(`signature:${actor.email}`, null);
	if (throttle.blocked) throw new FormProblem({ [field]: `Too many wrong signatures. Try again in ${throttle.retryAfterMinutes} minute${throttle.retryAfterMinutes === 1 ? '' : 's'}.` }, 'rate-limited');
	if (hasPassword) {
		const password = String(form.get('password') ?? '');
		if (!password) throw new FormProblem({ password: 'Enter your password to sign the approval.' });
		if (await verifyPassword(passwordHash!, password)) return { method: 'password' };
		await signatureFailed(event, actor, studyId, sessionId, 'password', 'wrong password');
		throw new FormProblem({ password: 'That is not your password. Nothing was approved; enter it again.' });
	}
	const code = String(form.get('code') ?? '').replace(/\s+/g, '');
	if (!/^\d{6}$/.test(code)) throw new FormProblem({ code: 'Enter the 6-digit code from the e-mail (ask for one with “E-mail me a code”).' });
	const rows = await db().query<{ id: string; code_hash: string; salt: string }>(
		`SELECT id, code_hash, salt FROM signature_codes WHERE user_id = :u AND session_id = :s AND used_at IS NULL AND expires_at > now() ORDER BY created_at DESC`,
		{ replacements: { u: actor.id, s: sessionId }, type: QueryTypes.SELECT }
	);
	const hit = rows.find((r) => timingSafeEqual(Buffer.from(hashCode(code, r.salt), 'hex'), Buffer.from(r.code_hash, 'hex')));
	if (hit) return { method: 'email_code', codeId: hit.id };
	await signatureFailed(event, actor, studyId, sessionId, 'email_code', rows.length ? 'wrong code' : 'no valid code (used, expired or never sent)');
	throw new FormProblem({ code: rows.length ? 'That code is not right. Nothing was approved; check the e-mail and enter it again.' : 'That code is used or has expired (codes last 10 minutes). Ask for a new one.' });
}

/** E-mails the PI a fresh 6-digit code for signing this session's approval (accounts without a password). */
export async function sendSignatureCode(event: RequestEvent, rawId: string, rawSid: string): Promise<{ expiresAt: string }> {
	const { actor, study } = await guardStudy(event, 'session.approve', rawId);
	const s = await sessionIn(study.id, rawSid);
	if (s.state !== 'in_review') refuseState('approve', s.state);
	if ((await passwordHashOf(actor.id)) !== null) throw new FormProblem({ code: 'Your account has a password: sign with your password instead.' }, 'conflict');
	const recent = await db().query<{ n: string }>(
		`SELECT count(*) AS n FROM signature_codes WHERE user_id = :u AND session_id = :s AND created_at > now() - make_interval(mins => :w)`,
		{ replacements: { u: actor.id, s: s.id, w: CODE_WINDOW_MINUTES }, type: QueryTypes.SELECT }
	);
	if (Number(recent[0]?.n ?? 0) >= CODE_REQUESTS) throw new FormProblem({ code: `You asked for ${CODE_REQUESTS} codes in ${CODE_WINDOW_MINUTES} minutes. Use the latest one, or wait a few minutes.` }, 'rate-limited');
	const code = String(randomInt(0, 1_000_000)).padStart(6, '0');
	const salt = randomBytes(16).toString('hex');
	const participant = await participantCodeOf(s.participantId);
	const expiresAt = await db().transaction(async (transaction) => {
		// a new code replaces any earlier one for this session
		await db().query(`UPDATE signature_codes SET expires_at = now() WHERE user_id = :u AND session_id = :s AND used_at IS NULL AND expires_at > now()`, {
			replacements: { u: actor.id, s: s.id },
			transaction
		});
		const [rows] = (await db().query(
			`INSERT INTO signature_codes (user_id, session_id, code_hash, salt, expires_at) VALUES (:u, :s, :h, :salt, now() + make_interval(mins => :m)) RETURNING id, expires_at`,
			{ replacements: { u: actor.id, s: s.id, h: hashCode(code, salt), salt, m: CODE_MINUTES }, transaction }
		)) as [{ id: string; expires_at: Date }[], unknown];
		await record(
			{ action: 'session.signature-code-sent', actorUserId: actor.id, actorLabel: actor.email, studyId: study.id, recordType: 'session', recordId: s.id, ipAddress: contextOf(event).ipAddress, details: { expiresAt: rows[0].expires_at } },
			transaction
		);
		return new Date(rows[0].expires_at);
	});
	await enqueueMail({
		to: actor.email,
		subject: `Your code to sign the approval of ${study.code} ${participant}`,
		text:
			`Your code to sign the approval of the session of ${participant} on ${s.sessionOn} (study ${study.code}) is:\n\n    ${code}\n\n` +
			`It works once, for this session only, until ${expiresAt.toISOString().slice(11, 16)} UTC (${CODE_MINUTES} minutes). ` +
			`If you did not ask for it, ignore this e-mail and tell your lab administrator.\n\nThe session: ${sessionLink(event, study.id, s.id)}`
	});
	return { expiresAt: expiresAt.toISOString() };
}

// ---------------------------------------------------------------------------------------------- transitions

/** The session page's address for e-mails (the configured origin, else the request's). */
function sessionLink(event: RequestEvent, studyId: string, sessionId: string): string {
	return `${(config().ORIGIN ?? event.url.origin).replace(/\/+$/, '')}/studies/${studyId}/sessions/${sessionId}`;
}

async function participantCodeOf(participantId: string): Promise<string> {
	const rows = await db().query<{ code: string }>(`SELECT code FROM participants WHERE id = :id`, { replacements: { id: participantId }, type: QueryTypes.SELECT });
	return rows[0]?.code ?? '';
}

/**
 * Moves the session one step. Order of refusals: access (403/404), state (409), fields (400), trials with a done run
 * (submit, 409), signature (approve, 400); then, in one transaction with the session row FOR UPDATE, the state is
 * checked again, consent (approve), the change, its history row and its audit entry. E-mails go out after commit.
 */
export async function transition(event: RequestEvent, rawId: string, rawSid: string, step: Transition, form: FormData): Promise<{ to: SessionState }> {
	const { actor, study } = await guardStudy(event, STEPS[step].action, rawId);
	const found = await sessionIn(study.id, rawSid);
	if (!STEPS[step].from.includes(found.state)) refuseState(step, found.state);
	let note: string | null = null;
	let signature: Signature | null = null;
	if (step === 'approve') {
		if (String(form.get('meaning') ?? '') !== SIGNATURE_MEANING) throw new FormProblem({ meaning: `Tick the box to confirm that your signature means “${SIGNATURE_MEANING}”.` });
	} else {
		note = noteOf(form, step);
		if (form.get('confirm') !== 'yes') throw new FormProblem({ confirm: 'Tick the box to confirm this step.' });
	}
	if (step === 'submit' && (await doneRuns(found.id)) === 0)
		error(409, 'This session has no trial with a finished (done) run yet; upload a trial and run it before submitting the session for review.');
	if (step === 'approve') signature = await checkSignature(event, actor, study.id, found.id, form);

	const to = STEPS[step].to;
	const transitionId = await db().transaction(async (transaction) => {
		const [locked] = (await db().query(`SELECT state FROM sessions WHERE id = :id FOR UPDATE`, { replacements: { id: found.id }, transaction })) as [{ state: SessionState }[], unknown];
		const from = locked[0].state;
		if (!STEPS[step].from.includes(from)) refuseState(step, from);
		if (step === 'submit' && (await doneRuns(found.id, transaction)) === 0) error(409, 'This session has no trial with a finished (done) run yet.');
		if (step === 'approve') {
			await requireValidConsent(found.participantId, 'approval', transaction);
			if (signature?.codeId) {
				const [used] = (await db().query(`UPDATE signature_codes SET used_at = now() WHERE id = :id AND used_at IS NULL AND expires_at > now() RETURNING id`, {
					replacements: { id: signature.codeId },
					transaction
				})) as [unknown[], unknown];
				if (!used.length) throw new FormProblem({ code: 'That code was used a moment ago. Ask for a new one.' });
			}
		}
		await db().query(`UPDATE sessions SET state = :to, updated_at = now() WHERE id = :id`, { replacements: { to, id: found.id }, transaction });
		const [rows] = (await db().query(
			`INSERT INTO session_transitions (session_id, from_state, to_state, actor_user_id, actor_label, note, signature_meaning, signature_method)
			 VALUES (:sid, :from, :to, :uid, :label, :note, :meaning, :method) RETURNING id`,
			{
				replacements: {
					sid: found.id,
					from,
					to,
					uid: actor.id,
					label: actor.name?.trim() || actor.email,
					note,
					meaning: signature ? SIGNATURE_MEANING : null,
					method: signature?.method ?? null
				},
				transaction
			}
		)) as [{ id: string }[], unknown];
		await record(
			{
				action: `session.${VERB[step]}`,
				actorUserId: actor.id,
				actorLabel: actor.email,
				studyId: study.id,
				recordType: 'session',
				recordId: found.id,
				ipAddress: contextOf(event).ipAddress,
				details: { from, to, ...(note ? { [STEPS[step].field]: note } : {}), ...(signature ? { meaning: SIGNATURE_MEANING, method: signature.method } : {}) }
			},
			transaction
		);
		return rows[0].id;
	});
	try {
		await notify(event, step, found, study, actor, note, transitionId);
	} catch (err) {
		// the step stands without its e-mail; the audit log and the work queues have it
		console.error('[workflow] could not queue the notification:', (err as Error).message);
	}
	return { to };
}

/** Submitted → the study's PIs; approved, returned or reopened → the person who last submitted it. */
async function notify(event: RequestEvent, step: Transition, s: Session, study: { id: string; code: string }, actor: Actor, note: string | null, transitionId: string) {
	const link = sessionLink(event, study.id, s.id);
	const participant = await participantCodeOf(s.participantId);
	const who = actor.name ?? actor.email;
	const what = `the session of ${participant} on ${s.sessionOn} (study ${study.code})`;
	let to: string[];
	if (step === 'submit') {
		const rows = await db().query<{ email: string }>(
			`SELECT u.email FROM study_members m JOIN users u ON u.id = m.user_id WHERE m.study_id = :study AND m.role = 'pi' AND u.deactivated_at IS NULL AND u.id <> :me`,
			{ replacements: { study: study.id, me: actor.id }, type: QueryTypes.SELECT }
		);
		to = rows.map((r) => r.email);
	} else {
		const rows = await db().query<{ email: string }>(
			`SELECT u.email FROM session_transitions t JOIN users u ON u.id = t.actor_user_id
			 WHERE t.session_id = :sid AND t.to_state = 'in_review' AND u.deactivated_at IS NULL ORDER BY t.at DESC LIMIT 1`,
			{ replacements: { sid: s.id }, type: QueryTypes.SELECT }
		);
		to = rows.map((r) => r.email).filter((e) => e !== actor.email);
	}
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
	for (const address of to) await enqueueMail({ to: address, subject: subject[step], text: body[step] }, `session-transition ${transitionId} ${address}`);
}

// ---------------------------------------------------------------------------------------------- work queues

export interface WorkRow {
	studyId: string;
	studyCode: string;
	sessionId: string;
	participantCode: string;
	sessionOn: string;
	state: SessionState;
	/** why it is waiting for this person */
	why: string;
}

export interface WorkQueues {
	approve: WorkRow[];
	returned: WorkRow[];
	recordings: WorkRow[];
	/** which queues apply to the person (by the roles they hold) */
	roles: { pi: boolean; researcher: boolean; technician: boolean };
	total: number;
}

const WORK_COLUMNS = `s.study_id AS "studyId", st.code AS "studyCode", s.id AS "sessionId", p.code AS "participantCode", to_char(s.session_on, 'YYYY-MM-DD') AS "sessionOn", s.state`;
const WORK_FROM = `FROM sessions s JOIN studies st ON st.id = s.study_id JOIN participants p ON p.id = s.participant_id`;

/** The signed-in person's work by role: sessions to approve (PI), returned sessions (researcher), recordings to do (technician). */
export async function workQueuesOf(actor: Actor, limit = 50): Promise<WorkQueues> {
	const studiesAs = (role: string) => [...actor.roles].filter(([, r]) => r === role).map(([id]) => id);
	const pi = studiesAs('pi');
	const researcher = studiesAs('researcher');
	const technician = studiesAs('technician');
	const q = <T extends object>(sql: string, ids: string[]) =>
		ids.length ? db().query<T>(sql, { replacements: { ids, limit }, type: QueryTypes.SELECT }) : Promise.resolve([] as T[]);
	const [approve, returned, recordings] = await Promise.all([
		q<WorkRow>(`SELECT ${WORK_COLUMNS}, 'submitted for your approval' AS why ${WORK_FROM} WHERE s.study_id IN (:ids) AND s.state = 'in_review' ORDER BY s.updated_at LIMIT :limit`, pi),
		q<WorkRow>(`SELECT ${WORK_COLUMNS}, 'returned by the PI with a comment' AS why ${WORK_FROM} WHERE s.study_id IN (:ids) AND s.state = 'returned' ORDER BY s.updated_at LIMIT :limit`, researcher),
		q<WorkRow>(
			`SELECT ${WORK_COLUMNS},
			   CASE WHEN NOT EXISTS (SELECT 1 FROM trials t WHERE t.session_id = s.id) THEN 'no trial yet' ELSE 'latest run failed' END AS why
			 ${WORK_FROM}
			 WHERE s.study_id IN (:ids) AND s.state IN ('draft', 'returned') AND (
			   NOT EXISTS (SELECT 1 FROM trials t WHERE t.session_id = s.id)
			   OR EXISTS (SELECT 1 FROM trials t WHERE t.session_id = s.id AND (SELECT r.state FROM runs r WHERE r.trial_id = t.id ORDER BY r.created_at DESC, r.id DESC LIMIT 1) = 'failed'))
			 ORDER BY s.session_on, s.created_at LIMIT :limit`,
			technician
		)
	]);
	return {
		approve,
		returned,
		recordings,
		roles: { pi: pi.length > 0, researcher: researcher.length > 0, technician: technician.length > 0 },
		total: approve.length + returned.length + recordings.length
	};
}
