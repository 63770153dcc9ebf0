// The e-mailed consent workflow: invitations, resends and reminders by staff; consent, decline and withdrawal by
// the participant through single-use links; each state change written with its history row and audit event.
import { FormProblem, notFound } from '../errors';
import type { Transaction } from 'sequelize';
import { z } from 'zod';
import { db } from '../db/index';
import { ConsentFormVersion, Participant, ParticipantPersonal } from '../db/models';
import { record } from '../audit/record';
import { may, type Actor } from '../access/guard';
import { linkBase, type RequestContext } from '../access/context';
import { participantFor } from '../participants/records';
import { renderMarkdown } from './markdown';
import { currentLab } from '../studies/lab';
import { sendMail } from '../mail/index';
import { CONSENT_STATE_LABEL, type ConsentState } from './check';
import {
	checkLink,
	CONSENT_LINK_LIFETIME_DAYS,
	issueLink,
	markLinksMailed,
	markLinkUsed,
	revokeOpenConsentLinks,
	type LinkRefusal
} from './links';
import * as q from './queries';
import { flagRunsOfParticipant, listFlaggedRuns } from '../runs/flags';
import type { ConsentEventView, ConsentPage, LinkView, RefusedLink, StudyContact, WithdrawPage } from '../../types/consent';

export type { ConsentEventView, ConsentPage, LinkView, RefusedLink, StudyContact, WithdrawPage };

export const PARTICIPANT_LABEL = 'participant (e-mailed link)';
const SYSTEM_LABEL = 'system';

type SendKind = 'invitation' | 'resend' | 'reminder';
/** Which staff action is possible in which state. */
export const SEND_ALLOWED: Record<SendKind, readonly ConsentState[]> = {
	invitation: ['not_invited', 'expired', 'declined', 'withdrawn'],
	resend: ['invited'],
	reminder: ['invited']
};

// ---------------------------------------------------------------- shared reads

type ParticipantRow = q.LockedParticipant;

async function lockParticipant(t: Transaction, participantId: string): Promise<ParticipantRow> {
	const row = await q.lockParticipant(t, participantId);
	if (!row) throw notFound();
	return row;
}

interface FormVersionRow {
	id: string;
	version: number;
	body_markdown: string;
	confirmations: string[];
}

async function currentFormVersion(studyId: string, transaction?: Transaction): Promise<FormVersionRow | null> {
	const v = await ConsentFormVersion.findOne({ where: { studyId }, order: [['version', 'DESC']], transaction });
	return v && { id: v.id, version: v.version, body_markdown: v.bodyMarkdown, confirmations: v.confirmations };
}

async function studyContact(studyId: string, t?: Transaction): Promise<StudyContact> {
	const s = (await q.contactRowOf(studyId, t))!;
	const lab = await currentLab();
	return {
		studyId: s.id,
		studyCode: s.code,
		title: s.title,
		ethicsReference: s.ethics_reference,
		labName: lab?.name ?? null,
		contactName: s.pi_name,
		contactEmail: s.pi_email
	};
}

async function personalOf(participantId: string, transaction?: Transaction): Promise<{ fullName: string | null; email: string | null }> {
	const row = await ParticipantPersonal.findByPk(participantId, { transaction });
	return { fullName: row?.fullName ?? null, email: row?.email ?? null };
}

// ---------------------------------------------------------------- the one way a state changes

interface Change {
	participant: ParticipantRow;
	to: ConsentState;
	actorUserId: string | null;
	actorLabel: string;
	/** The form version the new state refers to (sent, shown, agreed); null keeps the stored one. */
	formVersionId?: string | null;
	note?: string | null;
}

/** Writes the new state on the participant and appends the history row, in the caller's transaction. */
async function changeState(t: Transaction, c: Change): Promise<void> {
	const from = c.participant.stored_state === 'invited' && c.participant.state === 'expired' ? 'expired' : c.participant.stored_state;
	await q.writeStateChange(t, {
		participantId: c.participant.id,
		from,
		to: c.to,
		actorUserId: c.actorUserId,
		actorLabel: c.actorLabel,
		formVersionId: c.formVersionId ?? null,
		note: c.note ?? null
	});
}

/** An invitation that lapsed without a decision is written to the history as "expired" (lazily, when next seen). */
async function settleExpiry(t: Transaction, p: ParticipantRow): Promise<ParticipantRow> {
	if (p.stored_state !== 'invited' || p.state !== 'expired') return p;
	await changeState(t, {
		participant: p,
		to: 'expired',
		actorUserId: null,
		actorLabel: SYSTEM_LABEL,
		note: `The consent link lapsed after ${CONSENT_LINK_LIFETIME_DAYS} days without a decision.`
	});
	await record(
		{
			action: 'consent.expired',
			actorLabel: SYSTEM_LABEL,
			studyId: p.study_id,
			recordType: 'participant',
			recordId: p.id,
			details: { code: p.code }
		},
		t
	);
	return { ...p, stored_state: 'expired', state: 'expired' };
}

// ---------------------------------------------------------------- e-mails

function contactLine(c: StudyContact): string {
	return c.contactEmail
		? `${c.contactName ?? c.contactEmail} (principal investigator), ${c.contactEmail}`
		: `the study team of ${c.labName ?? 'the laboratory'}`;
}

function studyLine(c: StudyContact): string {
	return `“${c.title}” (protocol ${c.studyCode}${c.ethicsReference ? `, ethics approval ${c.ethicsReference}` : ''})`;
}

function footer(c: StudyContact, withdrawLink: string): string {
	return (
		`\n\nYou may withdraw your consent at any time, without giving a reason, with this link:\n${withdrawLink}\n\n` +
		`Questions about the study: ${contactLine(c)}.\n` +
		(c.ethicsReference ? `The study was approved by the ethics board under reference ${c.ethicsReference}.\n` : '') +
		`${c.labName ?? ''}`
	).trimEnd();
}

const fmtDate = (d: Date) => d.toISOString().slice(0, 10);

function invitationMail(
	kind: SendKind,
	c: StudyContact,
	name: string | null,
	consentLink: string,
	withdrawLink: string,
	expiresAt: Date
): { subject: string; text: string } {
	const hello = name ? `Dear ${name},` : 'Hello,';
	const lead =
		kind === 'reminder'
			? `This is a friendly reminder about the study ${studyLine(c)}. We have not yet received your decision; there is no obligation to take part.`
			: `${c.labName ?? 'Our laboratory'} invites you to take part in the study ${studyLine(c)}.`;
	return {
		subject: `${kind === 'reminder' ? 'Reminder: ' : ''}Consent for the study ${c.studyCode}: ${c.title}`.slice(0, 200),
		text:
			`${hello}\n\n${lead}\n\n` +
			`Please read the study information and the consent form on this page, then tell us whether you agree or do not wish to take part. ` +
			`The link works once and for ${CONSENT_LINK_LIFETIME_DAYS} days (until ${fmtDate(expiresAt)}); ` +
			`${kind === 'invitation' ? 'no account is needed' : 'links in earlier e-mails no longer work'}:\n${consentLink}` +
			footer(c, withdrawLink)
	};
}

// ---------------------------------------------------------------- staff: the participant's consent page

/** Everything the staff consent page shows: state, history, links sent; never a name, address or typed signature. */
export async function consentOverview(actor: Actor | null, ctx: RequestContext, rawId: string, rawPid: string) {
	const { actor: a, study, participant: target } = await participantFor(actor, ctx, 'study.read', rawId, rawPid);
	const p = await db().transaction(async (t) => settleExpiry(t, await lockParticipant(t, target.id)));
	const [events, links, form, version] = await Promise.all([
		q.historyOf(p.id),
		q.sentLinksOf(p.id),
		currentFormVersion(study.id),
		p.consent_form_version_id ? ConsentFormVersion.findByPk(p.consent_form_version_id, { attributes: ['version'] }) : Promise.resolve(null)
	]);
	const mayInvite = may(a, 'consent.invite', study.id);
	const mayDecide = may(a, 'consent.decide', study.id);
	// whether an address exists is all this page needs; the address itself stays on the participant page
	const hasEmail = mayInvite ? Boolean((await personalOf(p.id)).email) : null;
	const now = Date.now();
	return {
		study: { id: study.id, code: study.code, title: study.title, ethicsReference: study.ethicsReference ?? null },
		participant: { id: p.id, code: p.code },
		consent: {
			state: p.state,
			label: CONSENT_STATE_LABEL[p.state],
			since: p.consent_state_since?.toISOString() ?? null,
			formVersion: version?.version ?? null
		},
		currentFormVersion: form?.version ?? null,
		history: events.map<ConsentEventView>((e) => ({
			at: e.at.toISOString(),
			from: e.from_state,
			to: e.to_state,
			actor: e.actor_label,
			formVersion: e.form_version,
			note: e.note
		})),
		links: links.map<LinkView>((l) => ({
			kind: l.kind,
			purpose: l.purpose,
			createdAt: l.created_at.toISOString(),
			sentAt: l.sent_at?.toISOString() ?? null,
			expiresAt: l.expires_at?.toISOString() ?? null,
			status: l.used_at ? 'used' : l.revoked_at ? 'superseded' : l.expires_at && l.expires_at.getTime() <= now ? 'expired' : 'open',
			mailError: l.mail_error
		})),
		lifetimeDays: CONSENT_LINK_LIFETIME_DAYS,
		mayInvite,
		mayDecide,
		hasEmail,
		actions: {
			invitation: SEND_ALLOWED.invitation.includes(p.state),
			resend: SEND_ALLOWED.resend.includes(p.state),
			reminder: SEND_ALLOWED.reminder.includes(p.state)
		},
		flaggedRuns: await listFlaggedRuns(p.id)
	};
}

/**
 * The e-mail of a send could not go out; the state change and the links are kept (502: the mail server let us
 * down). The page shows `mailProblem` and offers to send again.
 */
export class MailNotSent extends FormProblem {
	constructor(readonly mailProblem: string) {
		super({}, 'upstream');
		this.name = 'MailNotSent';
	}
}

const SEND_ACTION: Record<SendKind, string> = { invitation: 'consent.invited', resend: 'consent.resent', reminder: 'consent.reminded' };
const SEND_WORD: Record<SendKind, string> = { invitation: 'invitation', resend: 'new link', reminder: 'reminder' };

/**
 * Sends a consent invitation, a fresh link (resend) or a reminder. Every send issues a new consent link and a new
 * withdrawal link and makes earlier consent links stop working. The state change is committed before the e-mail
 * goes out, so a mail failure loses nothing: MailNotSent says so and the page offers to send again.
 */
export async function sendConsentLink(
	actor: Actor | null,
	ctx: RequestContext,
	rawId: string,
	rawPid: string,
	kind: SendKind
): Promise<void> {
	const { actor: a, study, participant: target } = await participantFor(actor, ctx, 'consent.invite', rawId, rawPid);
	const ip = ctx.ipAddress;
	const prepared = await db().transaction(async (t) => {
		const p = await settleExpiry(t, await lockParticipant(t, target.id));
		const personal = await personalOf(p.id, t);
		if (!personal.email) {
			throw new FormProblem(
				{
					form: `${p.code} has no e-mail address in their personal data. Add one on the participant page, then send the ${SEND_WORD[kind]}.`
				},
				'conflict'
			);
		}
		const form = await currentFormVersion(study.id, t);
		if (!form)
			throw new FormProblem(
				{ form: 'This study has no consent form yet. The principal investigator publishes one under “Consent forms” first.' },
				'conflict'
			);
		if (!SEND_ALLOWED[kind].includes(p.state)) {
			const hint =
				kind === 'invitation'
					? p.state === 'invited'
						? 'An invitation is open: send a reminder or a new link instead.'
						: 'There is nothing to invite to.'
					: 'Send an invitation instead.';
			throw new FormProblem(
				{ form: `${p.code} is ${CONSENT_STATE_LABEL[p.state]}: a ${SEND_WORD[kind]} cannot be sent now. ${hint}` },
				'conflict'
			);
		}
		const superseded = await revokeOpenConsentLinks(t, p.id);
		const consentLink = await issueLink(t, { participantId: p.id, purpose: 'consent', kind, formVersionId: form.id, sentBy: a.id });
		const withdrawLink = await issueLink(t, { participantId: p.id, purpose: 'withdraw', kind, formVersionId: form.id, sentBy: a.id });
		// a resend or a reminder is not a change of state, but part of the story the history tells
		const note =
			p.stored_state !== 'invited' || p.state !== 'invited'
				? `Invitation sent (form version ${form.version}).`
				: `${kind === 'reminder' ? 'Reminder' : 'New link'} sent (form version ${form.version}); earlier links no longer work.`;
		await changeState(t, { participant: p, to: 'invited', actorUserId: a.id, actorLabel: a.email, formVersionId: form.id, note });
		await record(
			{
				action: SEND_ACTION[kind],
				actorUserId: a.id,
				actorLabel: a.email,
				studyId: study.id,
				recordType: 'participant',
				recordId: p.id,
				ipAddress: ip,
				details: { code: p.code, formVersion: form.version, linksSuperseded: superseded, expiresAt: consentLink.expiresAt?.toISOString() }
			},
			t
		);
		return { p, personal, consentLink, withdrawLink };
	});

	const contact = await studyContact(study.id);
	const base = linkBase(ctx);
	const mail = invitationMail(
		kind,
		contact,
		prepared.personal.fullName,
		`${base}/consent/${prepared.consentLink.token}`,
		`${base}/consent/withdraw/${prepared.withdrawLink.token}`,
		prepared.consentLink.expiresAt!
	);
	const ids = [prepared.consentLink.id, prepared.withdrawLink.id];
	try {
		await sendMail({ to: prepared.personal.email!, ...mail });
		await markLinksMailed(ids, null);
	} catch (err) {
		const why = (err as Error).message;
		await markLinksMailed(ids, why.slice(0, 500));
		await record({
			action: 'consent.mail.failed',
			actorUserId: a.id,
			actorLabel: a.email,
			outcome: 'failed',
			studyId: study.id,
			recordType: 'participant',
			recordId: prepared.p.id,
			ipAddress: ip,
			details: { kind, error: why }
		});
		throw new MailNotSent(
			`The ${SEND_WORD[kind]} for ${prepared.p.code} is recorded, but the e-mail could not be sent (${why}). Check the mail server on the status page, then use “Send a new link”.`
		);
	}
}

// ---------------------------------------------------------------- participant: the consent page

/** Why a link was not used, for the refusal page: the reason, and the state when it was decided already. */
interface Refusal {
	reason: LinkRefusal | 'decided';
	participantId: string | null;
	state?: ConsentState;
}

/** A link that cannot be used (any more): the page says why in calm words and whom to ask (410). */
export class LinkRefused extends FormProblem {
	constructor(readonly refused: RefusedLink) {
		super({}, 'gone');
		this.name = 'LinkRefused';
	}
}

async function refusal(
	reason: LinkRefusal | 'decided',
	participantId: string | null,
	ip: string | null,
	action: string | null,
	state?: ConsentState
): Promise<RefusedLink> {
	let contact: StudyContact | null = null;
	let studyId: string | null = null;
	if (participantId) {
		studyId = (await Participant.findByPk(participantId, { attributes: ['studyId'] }))?.studyId ?? null;
		if (studyId) contact = await studyContact(studyId);
	}
	if (action)
		await record({
			action,
			actorLabel: PARTICIPANT_LABEL,
			outcome: 'denied',
			studyId,
			recordType: participantId ? 'participant' : null,
			recordId: participantId,
			ipAddress: ip,
			details: { reason, state }
		});
	return { refused: reason, state, contact };
}

const todayIso = () => new Date().toISOString().slice(0, 10);

/**
 * The page a consent link opens, or why it cannot be used. Looking does not use the link up. `audit` is false when
 * the page is rendered after its own form was sent (the action has already recorded what happened).
 */
export async function consentPageFor(ctx: RequestContext, token: string, audit = true): Promise<ConsentPage | RefusedLink> {
	const ip = ctx.ipAddress;
	const action = audit ? 'consent.link.refused' : null;
	const check = await checkLink('consent', token);
	if (!check.ok) {
		if (check.reason === 'expired' && check.link) {
			await db().transaction(async (t) => settleExpiry(t, await lockParticipant(t, check.link!.participant_id)));
		}
		return refusal(check.reason, check.link?.participant_id ?? null, ip, action);
	}
	const p = (await q.studyAndStateOf(check.link.participant_id))!;
	if (p.stored_state !== 'invited') return refusal('decided', check.link.participant_id, ip, action, p.stored_state);
	const form = (await currentFormVersion(p.study_id))!;
	return {
		participantId: check.link.participant_id,
		contact: await studyContact(p.study_id),
		form: { id: form.id, version: form.version, html: renderMarkdown(form.body_markdown), confirmations: form.confirmations },
		expiresAt: check.link.expires_at!.toISOString(),
		today: todayIso()
	};
}

export interface DecisionOutcome {
	decision: 'consented' | 'declined';
	mailed: boolean;
	contact: StudyContact;
	formVersion: number;
}

/** What the consent form posted: the participant and form version it was shown for, ticks (`confirm-<i>`), name, date. */
export type ConsentAnswers = Record<string, string>;

/** The form's answers checked: every confirmation ticked, a name typed, and today's date (± 1 day for time zones). */
export function parseConsentAnswers(
	form: ConsentAnswers,
	confirmations: string[],
	today = todayIso()
): { fullName: string; signedOn: string } {
	const errors: Record<string, string> = {};
	confirmations.forEach((_, i) => {
		if (form[`confirm-${i}`] !== 'yes')
			errors[`confirm-${i}`] = 'Tick this statement to agree, or choose “I do not wish to take part” below.';
	});
	const name = z
		.string()
		.trim()
		.min(2, 'Type your full name as your signature.')
		.max(200, 'Keep your name under 200 characters.')
		.safeParse(form.fullName ?? '');
	if (!name.success) errors.fullName = name.error.issues[0].message;
	const signedOn = (form.signedOn ?? '').trim();
	if (!/^\d{4}-\d{2}-\d{2}$/.test(signedOn) || Number.isNaN(Date.parse(signedOn))) errors.signedOn = 'Enter today’s date (YYYY-MM-DD).';
	else if (Math.abs(Date.parse(signedOn) - Date.parse(today)) > 86_400_000)
		errors.signedOn = `Enter today’s date (${today}); a signature cannot be dated another day.`;
	if (Object.keys(errors).length) throw new FormProblem(errors);
	return { fullName: name.success ? name.data : '', signedOn };
}

/** A refusal the page shows beside the form (the link stays usable). */
export class ReReadProblem extends FormProblem {}

/** What a link's transaction ends with: the work done, or a refusal (answered after it). */
type LinkStep<T> = { done: T } | { refused: Refusal };

/** Answers a refused link after its transaction (so the audit row is not rolled back with it). */
async function refuseLink(r: Refusal, ip: string | null, action: string): Promise<never> {
	throw new LinkRefused(await refusal(r.reason, r.participantId, ip, action, r.state));
}

/** A change the participant made through a link: the new state with its history row, and its audit event. */
async function participantChanged(
	t: Transaction,
	p: ParticipantRow,
	ip: string | null,
	c: { to: ConsentState; formVersionId?: string; note: string; action: string; details: Record<string, unknown> }
): Promise<void> {
	await changeState(t, {
		participant: p,
		to: c.to,
		actorUserId: null,
		actorLabel: PARTICIPANT_LABEL,
		formVersionId: c.formVersionId,
		note: c.note
	});
	await record(
		{
			action: c.action,
			actorLabel: PARTICIPANT_LABEL,
			studyId: p.study_id,
			recordType: 'participant',
			recordId: p.id,
			ipAddress: ip,
			details: { code: p.code, ...c.details }
		},
		t
	);
}

/** Mails the participant; a failure is recorded (and written on the links mailed) but loses nothing already saved. */
async function mailParticipant(
	p: { id: string; study_id: string },
	mail: { to: string; subject: string; text: string },
	kind: 'confirmation' | 'withdrawal',
	linkIds: string[] = []
): Promise<boolean> {
	try {
		await sendMail(mail);
		await markLinksMailed(linkIds, null);
		return true;
	} catch (err) {
		await markLinksMailed(linkIds, (err as Error).message.slice(0, 500));
		await record({
			action: 'consent.mail.failed',
			actorLabel: SYSTEM_LABEL,
			outcome: 'failed',
			studyId: p.study_id,
			recordType: 'participant',
			recordId: p.id,
			details: { kind, error: (err as Error).message }
		});
		return false;
	}
}

/**
 * After a link's transaction: a refusal is answered (and audited); otherwise the participant gets the e-mail
 * `compose` writes (greeted by name when known), if they gave an address. A failed e-mail is recorded, not thrown.
 */
async function confirmByMail<T extends { p: ParticipantRow }>(
	step: LinkStep<T>,
	ip: string | null,
	refusedAction: string,
	kind: 'confirmation' | 'withdrawal',
	compose: (done: T, contact: StudyContact, hello: string) => { subject: string; text: string; linkIds?: string[] }
): Promise<{ done: T; contact: StudyContact; mailed: boolean }> {
	if ('refused' in step) return refuseLink(step.refused, ip, refusedAction);
	const done = step.done;
	const contact = await studyContact(done.p.study_id);
	const personal = await personalOf(done.p.id);
	if (!personal.email) return { done, contact, mailed: false };
	const { linkIds, ...mail } = compose(done, contact, personal.fullName ? `Dear ${personal.fullName},` : 'Hello,');
	return { done, contact, mailed: await mailParticipant(done.p, { to: personal.email, ...mail }, kind, linkIds) };
}

/**
 * Records the participant's decision from a consent link. The form carries the participant and the form version it
 * was shown for: another participant is refused; a version published since is refused with a request to read again
 * (so the version recorded is always the one the person read). The link is used up in the decision's transaction.
 */
export async function decide(
	ctx: RequestContext,
	token: string,
	form: ConsentAnswers,
	decision: 'consented' | 'declined'
): Promise<DecisionOutcome> {
	const ip = ctx.ipAddress;
	const postedParticipant = form.participantId ?? '';
	const postedVersion = form.formVersionId ?? '';
	type Done = {
		p: ParticipantRow;
		current: FormVersionRow;
		answers: { fullName: string; signedOn: string } | null;
		withdrawLink: { id: string; token: string } | null;
	};
	const step = await db().transaction(async (t): Promise<LinkStep<Done> | { wrongParticipant: string }> => {
		const check = await checkLink('consent', token, t);
		if (!check.ok) return { refused: { reason: check.reason, participantId: check.link?.participant_id ?? null } };
		const link = check.link;
		if (postedParticipant !== link.participant_id) return { wrongParticipant: link.participant_id };
		const p = await lockParticipant(t, link.participant_id);
		if (p.stored_state !== 'invited') return { refused: { reason: 'decided', participantId: p.id, state: p.stored_state } };
		const current = (await currentFormVersion(p.study_id, t))!;
		if (postedVersion !== current.id) {
			throw new ReReadProblem(
				{
					form: `The consent form was updated to version ${current.version} after you opened this page. Please read the new version below and decide again; nothing has been recorded yet.`
				},
				'conflict'
			);
		}
		const answers = decision === 'consented' ? parseConsentAnswers(form, current.confirmations) : null;
		const recordId = await q.insertConsentRecord(t, {
			participantId: p.id,
			decision,
			formVersionId: current.id,
			confirmations: answers ? current.confirmations : [],
			signedOn: answers?.signedOn ?? null,
			linkId: link.id,
			ip
		});
		if (answers) await q.insertSignature(t, recordId, answers.fullName);
		await markLinkUsed(t, link.id);
		await participantChanged(t, p, ip, {
			to: decision,
			formVersionId: current.id,
			note:
				decision === 'consented'
					? `Consent given under form version ${current.version}, signed ${answers!.signedOn}.`
					: `Declined to take part (form version ${current.version} shown).`,
			action: decision === 'consented' ? 'consent.given' : 'consent.declined',
			details: { formVersion: current.version, recordId }
		});
		const withdrawLink =
			decision === 'consented'
				? await issueLink(t, { participantId: p.id, purpose: 'withdraw', kind: 'confirmation', formVersionId: current.id, sentBy: null })
				: null;
		return { done: { p, current, answers, withdrawLink } };
	});
	if ('wrongParticipant' in step) {
		await record({
			action: 'consent.link.refused',
			actorLabel: PARTICIPANT_LABEL,
			outcome: 'denied',
			recordType: 'participant',
			recordId: step.wrongParticipant,
			ipAddress: ip,
			details: { reason: 'wrong-participant', posted: postedParticipant.slice(0, 64) }
		});
		throw new FormProblem(
			{ form: 'This form does not belong to the link it was sent with, so nothing was recorded. Open the link from your e-mail again.' },
			'forbidden'
		);
	}
	const { done, contact, mailed } = await confirmByMail(step, ip, 'consent.link.refused', 'confirmation', (d, c, hello) => ({
		subject: `${d.answers ? 'Your consent' : 'Your decision'}: study ${c.studyCode}`.slice(0, 200),
		text:
			d.answers && d.withdrawLink
				? consentCopy(c, d.current, d.answers, `${linkBase(ctx)}/consent/withdraw/${d.withdrawLink.token}`)
				: `${hello}\n\nWe have recorded that you do not wish to take part in the study ${studyLine(c)}. ` +
					`Thank you for letting us know; we will not contact you again about it.\n\nQuestions: ${contactLine(c)}.`,
		linkIds: d.withdrawLink ? [d.withdrawLink.id] : []
	}));
	return { decision, mailed, contact, formVersion: done.current.version };
}

/** The plain-text copy of what was agreed, for the participant's own records. */
export function consentCopy(
	c: StudyContact,
	form: { version: number; body_markdown: string; confirmations: string[] },
	answers: { fullName: string; signedOn: string },
	withdrawLink: string
): string {
	return (
		`Dear ${answers.fullName},\n\nThank you. We have recorded your consent to take part in the study ${studyLine(c)}.\n` +
		`Below is a copy of what you agreed to; please keep it.\n\n` +
		`==== Consent form, version ${form.version} ====\n\n${form.body_markdown.trim()}\n\n` +
		`==== You confirmed ====\n${form.confirmations.map((s) => `[x] ${s}`).join('\n')}\n\n` +
		`Signed (typed name): ${answers.fullName}\nDate: ${answers.signedOn}\n` +
		footer(c, withdrawLink)
	);
}

// ---------------------------------------------------------------- participant: withdrawal

const WITHDRAW_EFFECT = (s: ConsentState): WithdrawPage['effect'] =>
	s === 'consented' ? 'withdraw' : s === 'invited' || s === 'expired' ? 'decline' : 'nothing';

/** The page a withdrawal link opens, or why it cannot be used (looking does not use the link up). */
export async function withdrawPageFor(ctx: RequestContext, token: string, audit = true): Promise<WithdrawPage | RefusedLink> {
	const check = await checkLink('withdraw', token);
	if (!check.ok)
		return refusal(check.reason, check.link?.participant_id ?? null, ctx.ipAddress, audit ? 'consent.withdraw-link.refused' : null);
	const p = (await q.studyAndStateOf(check.link.participant_id))!;
	return { contact: await studyContact(p.study_id), state: p.state, effect: WITHDRAW_EFFECT(p.state) };
}

export interface WithdrawOutcome {
	effect: 'withdraw' | 'decline';
	mailed: boolean;
	contact: StudyContact;
	flaggedRuns: number;
}

/**
 * Withdraws consent from a withdrawal link: new work stops at once (the state changes in this transaction, and
 * work takes a share lock on the participant row), existing runs are flagged for the PI's decision, never deleted.
 */
export async function withdraw(ctx: RequestContext, token: string): Promise<WithdrawOutcome> {
	const ip = ctx.ipAddress;
	type Done = { p: ParticipantRow; effect: 'withdraw' | 'decline'; flagged: string[] };
	const step = await db().transaction(async (t): Promise<LinkStep<Done>> => {
		const check = await checkLink('withdraw', token, t);
		if (!check.ok) return { refused: { reason: check.reason, participantId: check.link?.participant_id ?? null } };
		const p = await lockParticipant(t, check.link.participant_id);
		const effect = WITHDRAW_EFFECT(p.state);
		if (effect === 'nothing') return { refused: { reason: 'decided', participantId: p.id, state: p.state } };
		await markLinkUsed(t, check.link.id);
		await revokeOpenConsentLinks(t, p.id);
		const at = fmtDate(new Date());
		const flagged = effect === 'withdraw' ? await flagRunsOfParticipant(p.id, `Consent withdrawn on ${at}`, t) : [];
		await q.insertConsentRecord(t, {
			participantId: p.id,
			decision: effect === 'withdraw' ? 'withdrawn' : 'declined',
			formVersionId: p.consent_form_version_id,
			confirmations: [],
			signedOn: null,
			linkId: check.link.id,
			ip
		});
		await participantChanged(t, p, ip, {
			to: effect === 'withdraw' ? 'withdrawn' : 'declined',
			note:
				effect === 'withdraw'
					? `Consent withdrawn; ${flagged.length} existing run(s) flagged for the PI's decision.`
					: 'Declined through the withdrawal link before consenting.',
			action: effect === 'withdraw' ? 'consent.withdrawn' : 'consent.declined',
			details: { flaggedRuns: flagged }
		});
		return { done: { p, effect, flagged } };
	});
	const { done, contact, mailed } = await confirmByMail(step, ip, 'consent.withdraw-link.refused', 'withdrawal', (d, c, hello) => ({
		subject: `${d.effect === 'withdraw' ? 'Your withdrawal' : 'Your decision'}: study ${c.studyCode}`,
		text:
			d.effect === 'withdraw'
				? `${hello}\n\nWe have recorded on ${fmtDate(new Date())} that you withdraw your consent to the study ${studyLine(c)}.\n\n` +
					`No new recordings or analyses of your data will be made. Results computed before today are set aside; the principal investigator decides, ` +
					`under the rules the ethics board approved for this study, whether they are kept or excluded. Nothing is deleted without that decision.\n\n` +
					`Questions, or if you wish your data to be erased: ${contactLine(c)}.`
				: `${hello}\n\nWe have recorded that you do not wish to take part in the study ${studyLine(c)}. We will not contact you again about it.\n\nQuestions: ${contactLine(c)}.`
	}));
	return { effect: done.effect, mailed, contact, flaggedRuns: done.flagged.length };
}
