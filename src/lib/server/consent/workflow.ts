// The e-mailed consent workflow: invitations, resends and reminders by staff; consent, decline and withdrawal by
// the participant through single-use links; each state change written with its history row and audit event.
import { FormProblem } from '../errors';
import { contextOf } from '../http/edge';
import type { RequestEvent } from '@sveltejs/kit';
import { error } from '@sveltejs/kit';
import { QueryTypes, type Transaction } from 'sequelize';
import { z } from 'zod';
import { db } from '../db/index';
import { config } from '../config';
import { record } from '../audit/record';
import { may } from '../access/guard';
import { isUuid } from '../studies/studies';
import { renderMarkdown } from './markdown';
import { currentLab } from '../studies/lab';
import { sendMail } from '../mail/index';
import { guardStudy } from '../studies/records';
import { CONSENT_STATE_LABEL, STATE_SQL, type ConsentState } from './check';
import { checkLink, CONSENT_LINK_LIFETIME_DAYS, issueLink, markLinksMailed, markLinkUsed, revokeOpenConsentLinks, type LinkKind, type LinkRefusal } from './links';
import { flagRunsOfParticipant, listFlaggedRuns } from '../runs/flags';

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

interface ParticipantRow {
	id: string;
	study_id: string;
	code: string;
	stored_state: ConsentState;
	state: ConsentState;
	consent_state_since: Date | null;
	consent_form_version_id: string | null;
}

async function lockParticipant(t: Transaction, participantId: string): Promise<ParticipantRow> {
	const rows = await db().query<ParticipantRow>(
		`SELECT p.id, p.study_id, p.code, p.consent_state AS stored_state, ${STATE_SQL} AS state, p.consent_state_since, p.consent_form_version_id
		 FROM participants p WHERE p.id = :participantId FOR UPDATE OF p`,
		{ replacements: { participantId }, type: QueryTypes.SELECT, transaction: t }
	);
	if (!rows[0]) error(404, 'Not found');
	return rows[0];
}

interface FormVersionRow {
	id: string;
	version: number;
	body_markdown: string;
	confirmations: string[];
}

async function currentFormVersion(studyId: string, t?: Transaction): Promise<FormVersionRow | null> {
	const rows = await db().query<FormVersionRow>(
		`SELECT id, version, body_markdown, confirmations FROM consent_form_versions WHERE study_id = :studyId ORDER BY version DESC LIMIT 1`,
		{ replacements: { studyId }, type: QueryTypes.SELECT, transaction: t }
	);
	return rows[0] ?? null;
}

export interface StudyContact {
	studyId: string;
	studyCode: string;
	title: string;
	ethicsReference: string | null;
	labName: string | null;
	/** The principal investigator: whom to contact with questions. */
	contactName: string | null;
	contactEmail: string | null;
}

async function studyContact(studyId: string, t?: Transaction): Promise<StudyContact> {
	const rows = await db().query<{ id: string; code: string; title: string; ethics_reference: string | null; pi_name: string | null; pi_email: string | null }>(
		`SELECT s.id, s.code, s.title, s.ethics_reference,
		        (SELECT coalesce(u.name, u.email) FROM study_members m JOIN users u ON u.id = m.user_id WHERE m.study_id = s.id AND m.role = 'pi' AND u.deactivated_at IS NULL ORDER BY m.created_at LIMIT 1) AS pi_name,
		        (SELECT u.email FROM study_members m JOIN users u ON u.id = m.user_id WHERE m.study_id = s.id AND m.role = 'pi' AND u.deactivated_at IS NULL ORDER BY m.created_at LIMIT 1) AS pi_email
		 FROM studies s WHERE s.id = :studyId`,
		{ replacements: { studyId }, type: QueryTypes.SELECT, transaction: t }
	);
	const s = rows[0];
	const lab = await currentLab();
	return { studyId: s.id, studyCode: s.code, title: s.title, ethicsReference: s.ethics_reference, labName: lab?.name ?? null, contactName: s.pi_name, contactEmail: s.pi_email };
}

async function personalOf(participantId: string, t?: Transaction): Promise<{ fullName: string | null; email: string | null }> {
	const rows = await db().query<{ full_name: string | null; email: string | null }>(`SELECT full_name, email FROM participant_personal WHERE participant_id = :participantId`, {
		replacements: { participantId },
		type: QueryTypes.SELECT,
		transaction: t
	});
	return { fullName: rows[0]?.full_name ?? null, email: rows[0]?.email ?? null };
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
	await db().query(
		`UPDATE participants SET consent_state = :to, consent_state_since = now(), consent_form_version_id = coalesce(:formVersionId, consent_form_version_id) WHERE id = :id`,
		{ replacements: { to: c.to, formVersionId: c.formVersionId ?? null, id: c.participant.id }, transaction: t }
	);
	await db().query(
		`INSERT INTO consent_events (participant_id, from_state, to_state, actor_user_id, actor_label, form_version, note)
		 VALUES (:participantId, :from, :to, :actorUserId, :actorLabel,
		         (SELECT version FROM consent_form_versions WHERE id = coalesce(:formVersionId, (SELECT consent_form_version_id FROM participants WHERE id = :participantId))), :note)`,
		{
			replacements: { participantId: c.participant.id, from, to: c.to, actorUserId: c.actorUserId, actorLabel: c.actorLabel, formVersionId: c.formVersionId ?? null, note: c.note ?? null },
			transaction: t
		}
	);
}

/** An invitation that lapsed without a decision is written to the history as "expired" (lazily, when next seen). */
async function settleExpiry(t: Transaction, p: ParticipantRow): Promise<ParticipantRow> {
	if (p.stored_state !== 'invited' || p.state !== 'expired') return p;
	await changeState(t, { participant: p, to: 'expired', actorUserId: null, actorLabel: SYSTEM_LABEL, note: `The consent link lapsed after ${CONSENT_LINK_LIFETIME_DAYS} days without a decision.` });
	await record({ action: 'consent.expired', actorLabel: SYSTEM_LABEL, studyId: p.study_id, recordType: 'participant', recordId: p.id, details: { code: p.code } }, t);
	return { ...p, stored_state: 'expired', state: 'expired' };
}

// ---------------------------------------------------------------- e-mails

function linkBase(event: RequestEvent): string {
	return (config().ORIGIN ?? event.url.origin).replace(/\/+$/, '');
}

function contactLine(c: StudyContact): string {
	return c.contactEmail ? `${c.contactName ?? c.contactEmail} (principal investigator), ${c.contactEmail}` : `the study team of ${c.labName ?? 'the laboratory'}`;
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

function invitationMail(kind: SendKind, c: StudyContact, name: string | null, consentLink: string, withdrawLink: string, expiresAt: Date): { subject: string; text: string } {
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

export interface ConsentEventView {
	at: string;
	from: ConsentState;
	to: ConsentState;
	actor: string;
	formVersion: number | null;
	note: string | null;
}

export interface LinkView {
	kind: LinkKind;
	purpose: 'consent' | 'withdraw';
	createdAt: string;
	sentAt: string | null;
	expiresAt: string | null;
	status: 'open' | 'used' | 'expired' | 'superseded';
	mailError: string | null;
}

async function participantOfStudy(studyId: string, rawPid: string): Promise<{ id: string; code: string }> {
	const rows = isUuid(rawPid)
		? await db().query<{ id: string; code: string }>(`SELECT id, code FROM participants WHERE id = :id AND study_id = :studyId`, {
				replacements: { id: rawPid.toLowerCase(), studyId },
				type: QueryTypes.SELECT
			})
		: [];
	if (!rows[0]) error(404, 'Not found');
	return rows[0];
}

/** Everything the staff consent page shows: state, history, links sent; never a name, address or typed signature. */
export async function consentOverview(event: RequestEvent, rawId: string, rawPid: string) {
	const { actor, study } = await guardStudy(event, 'study.read', rawId);
	const target = await participantOfStudy(study.id, rawPid);
	const p = await db().transaction(async (t) => settleExpiry(t, await lockParticipant(t, target.id)));
	const [events, links, form, version] = await Promise.all([
		db().query<{ at: Date; from_state: ConsentState; to_state: ConsentState; actor_label: string; form_version: number | null; note: string | null }>(
			`SELECT at, from_state, to_state, actor_label, form_version, note FROM consent_events WHERE participant_id = :id ORDER BY at DESC, id DESC`,
			{ replacements: { id: p.id }, type: QueryTypes.SELECT }
		),
		db().query<{ kind: LinkKind; purpose: 'consent' | 'withdraw'; created_at: Date; sent_at: Date | null; expires_at: Date | null; used_at: Date | null; revoked_at: Date | null; mail_error: string | null }>(
			`SELECT kind, purpose, created_at, sent_at, expires_at, used_at, revoked_at, mail_error FROM consent_invitations WHERE participant_id = :id AND kind <> 'seed' ORDER BY created_at DESC`,
			{ replacements: { id: p.id }, type: QueryTypes.SELECT }
		),
		currentFormVersion(study.id),
		p.consent_form_version_id
			? db().query<{ version: number }>(`SELECT version FROM consent_form_versions WHERE id = :id`, { replacements: { id: p.consent_form_version_id }, type: QueryTypes.SELECT })
			: Promise.resolve([])
	]);
	const mayInvite = may(actor, 'consent.invite', study.id);
	const mayDecide = may(actor, 'consent.decide', study.id);
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
			formVersion: version[0]?.version ?? null
		},
		currentFormVersion: form?.version ?? null,
		history: events.map<ConsentEventView>((e) => ({ at: e.at.toISOString(), from: e.from_state, to: e.to_state, actor: e.actor_label, formVersion: e.form_version, note: e.note })),
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

export interface SendOutcome {
	kind: SendKind;
	mailed: boolean;
	/** Set when the state change was kept but the e-mail could not be sent. */
	mailProblem: string | null;
}

const SEND_ACTION: Record<SendKind, string> = { invitation: 'consent.invited', resend: 'consent.resent', reminder: 'consent.reminded' };
const SEND_WORD: Record<SendKind, string> = { invitation: 'invitation', resend: 'new link', reminder: 'reminder' };

/**
 * Sends a consent invitation, a fresh link (resend) or a reminder. Every send issues a new consent link and a new
 * withdrawal link and makes earlier consent links stop working. The state change is committed before the e-mail
 * goes out, so a mail failure loses nothing: the page says so and offers to send again.
 */
export async function sendConsentLink(event: RequestEvent, rawId: string, rawPid: string, kind: SendKind): Promise<SendOutcome> {
	const { actor, study } = await guardStudy(event, 'consent.invite', rawId);
	const target = await participantOfStudy(study.id, rawPid);
	const ip = contextOf(event).ipAddress;
	const prepared = await db().transaction(async (t) => {
		const p = await settleExpiry(t, await lockParticipant(t, target.id));
		const personal = await personalOf(p.id, t);
		if (!personal.email) {
			throw new FormProblem({ form: `${p.code} has no e-mail address in their personal data. Add one on the participant page, then send the ${SEND_WORD[kind]}.` }, 'conflict');
		}
		const form = await currentFormVersion(study.id, t);
		if (!form) throw new FormProblem({ form: 'This study has no consent form yet. The principal investigator publishes one under “Consent forms” first.' }, 'conflict');
		if (!SEND_ALLOWED[kind].includes(p.state)) {
			const hint =
				kind === 'invitation' ? (p.state === 'invited' ? 'An invitation is open: send a reminder or a new link instead.' : 'There is nothing to invite to.') : 'Send an invitation instead.';
			throw new FormProblem({ form: `${p.code} is ${CONSENT_STATE_LABEL[p.state]}: a ${SEND_WORD[kind]} cannot be sent now. ${hint}` }, 'conflict');
		}
		const superseded = await revokeOpenConsentLinks(t, p.id);
		const consentLink = await issueLink(t, { participantId: p.id, purpose: 'consent', kind, formVersionId: form.id, sentBy: actor.id });
		const withdrawLink = await issueLink(t, { participantId: p.id, purpose: 'withdraw', kind, formVersionId: form.id, sentBy: actor.id });
		if (p.stored_state !== 'invited' || p.state !== 'invited') {
			await changeState(t, { participant: p, to: 'invited', actorUserId: actor.id, actorLabel: actor.email, formVersionId: form.id, note: `Invitation sent (form version ${form.version}).` });
		} else {
			// not a change of state, but part of the story the history tells
			await changeState(t, {
				participant: p,
				to: 'invited',
				actorUserId: actor.id,
				actorLabel: actor.email,
				formVersionId: form.id,
				note: `${kind === 'reminder' ? 'Reminder' : 'New link'} sent (form version ${form.version}); earlier links no longer work.`
			});
		}
		await record(
			{
				action: SEND_ACTION[kind],
				actorUserId: actor.id,
				actorLabel: actor.email,
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
	const base = linkBase(event);
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
		return { kind, mailed: true, mailProblem: null };
	} catch (err) {
		const why = (err as Error).message;
		await markLinksMailed(ids, why.slice(0, 500));
		await record({ action: 'consent.mail.failed', actorUserId: actor.id, actorLabel: actor.email, outcome: 'failed', studyId: study.id, recordType: 'participant', recordId: prepared.p.id, ipAddress: ip, details: { kind, error: why } });
		return {
			kind,
			mailed: false,
			mailProblem: `The ${SEND_WORD[kind]} for ${prepared.p.code} is recorded, but the e-mail could not be sent (${why}). Check the mail server on the status page, then use “Send a new link”.`
		};
	}
}

// ---------------------------------------------------------------- participant: the consent page

/** What the participant sees when a link cannot be used: why, in calm words, and whom to ask. */
export interface RefusedLink {
	refused: LinkRefusal | 'decided';
	state?: ConsentState;
	contact: StudyContact | null;
}

export interface ConsentPage {
	participantId: string;
	contact: StudyContact;
	form: { id: string; version: number; html: string; confirmations: string[] };
	expiresAt: string;
	today: string;
}

async function refusal(reason: LinkRefusal | 'decided', participantId: string | null, ip: string | null, action: string | null, state?: ConsentState): Promise<RefusedLink> {
	let contact: StudyContact | null = null;
	let studyId: string | null = null;
	if (participantId) {
		const rows = await db().query<{ study_id: string }>(`SELECT study_id FROM participants WHERE id = :participantId`, { replacements: { participantId }, type: QueryTypes.SELECT });
		studyId = rows[0]?.study_id ?? null;
		if (studyId) contact = await studyContact(studyId);
	}
	if (action) await record({ action, actorLabel: PARTICIPANT_LABEL, outcome: 'denied', studyId, recordType: participantId ? 'participant' : null, recordId: participantId, ipAddress: ip, details: { reason, state } });
	return { refused: reason, state, contact };
}

const todayIso = () => new Date().toISOString().slice(0, 10);

/**
 * The page a consent link opens, or why it cannot be used. Looking does not use the link up. `audit` is false when
 * the page is rendered after its own form was sent (the action has already recorded what happened).
 */
export async function consentPageFor(token: string, ip: string | null, audit = true): Promise<ConsentPage | RefusedLink> {
	const action = audit ? 'consent.link.refused' : null;
	const check = await checkLink('consent', token);
	if (!check.ok) {
		if (check.reason === 'expired' && check.link) {
			await db().transaction(async (t) => settleExpiry(t, await lockParticipant(t, check.link!.participant_id)));
		}
		return refusal(check.reason, check.link?.participant_id ?? null, ip, action);
	}
	const rows = await db().query<{ study_id: string; consent_state: ConsentState }>(`SELECT study_id, consent_state FROM participants WHERE id = :id`, {
		replacements: { id: check.link.participant_id },
		type: QueryTypes.SELECT
	});
	if (rows[0].consent_state !== 'invited') return refusal('decided', check.link.participant_id, ip, action, rows[0].consent_state);
	const form = (await currentFormVersion(rows[0].study_id))!;
	return {
		participantId: check.link.participant_id,
		contact: await studyContact(rows[0].study_id),
		form: { id: form.id, version: form.version, html: renderMarkdown(form.body_markdown), confirmations: form.confirmations },
		expiresAt: check.link.expires_at!.toISOString(),
		today: todayIso()
	};
}

export type DecisionOutcome =
	| { ok: true; decision: 'consented' | 'declined'; mailed: boolean; contact: StudyContact; formVersion: number }
	| { ok: false; refused: RefusedLink };

/** The form's answers checked: every confirmation ticked, a name typed, and today's date (± 1 day for time zones). */
export function parseConsentAnswers(form: FormData, confirmations: string[], today = todayIso()): { fullName: string; signedOn: string } {
	const errors: Record<string, string> = {};
	confirmations.forEach((_, i) => {
		if (form.get(`confirm-${i}`) !== 'yes') errors[`confirm-${i}`] = 'Tick this statement to agree, or choose “I do not wish to take part” below.';
	});
	const name = z
		.string()
		.trim()
		.min(2, 'Type your full name as your signature.')
		.max(200, 'Keep your name under 200 characters.')
		.safeParse(String(form.get('fullName') ?? ''));
	if (!name.success) errors.fullName = name.error.issues[0].message;
	const signedOn = String(form.get('signedOn') ?? '').trim();
	if (!/^\d{4}-\d{2}-\d{2}$/.test(signedOn) || Number.isNaN(Date.parse(signedOn))) errors.signedOn = 'Enter today’s date (YYYY-MM-DD).';
	else if (Math.abs(Date.parse(signedOn) - Date.parse(today)) > 86_400_000) errors.signedOn = `Enter today’s date (${today}); a signature cannot be dated another day.`;
	if (Object.keys(errors).length) throw new FormProblem(errors);
	return { fullName: name.success ? name.data : '', signedOn };
}

/** A refusal the page shows beside the form (the link stays usable). */
export class ReReadProblem extends FormProblem {}

/**
 * Records the participant's decision from a consent link. The form carries the participant and the form version it
 * was shown for: another participant is refused; a version published since is refused with a request to read again
 * (so the version recorded is always the one the person read). The link is used up in the decision's transaction.
 */
export async function decide(event: RequestEvent, token: string, form: FormData, decision: 'consented' | 'declined'): Promise<DecisionOutcome> {
	const ip = contextOf(event).ipAddress;
	const postedParticipant = String(form.get('participantId') ?? '');
	const postedVersion = String(form.get('formVersionId') ?? '');
	// refused links are answered after the transaction, so their audit row is not rolled back with it
	let refusedFor: { reason: LinkRefusal | 'decided'; participantId: string | null; state?: ConsentState } | null = null;
	let wrongParticipant: string | null = null;
	const done = await db().transaction(async (t) => {
		const check = await checkLink('consent', token, t);
		if (!check.ok) {
			refusedFor = { reason: check.reason, participantId: check.link?.participant_id ?? null };
			return null;
		}
		const link = check.link;
		if (postedParticipant !== link.participant_id) {
			wrongParticipant = link.participant_id;
			return null;
		}
		const p = await lockParticipant(t, link.participant_id);
		if (p.stored_state !== 'invited') {
			refusedFor = { reason: 'decided', participantId: p.id, state: p.stored_state };
			return null;
		}
		const current = (await currentFormVersion(p.study_id, t))!;
		if (postedVersion !== current.id) {
			throw new ReReadProblem(
				{ form: `The consent form was updated to version ${current.version} after you opened this page. Please read the new version below and decide again; nothing has been recorded yet.` },
				'conflict'
			);
		}
		const answers = decision === 'consented' ? parseConsentAnswers(form, current.confirmations) : null;
		const [rec] = await db().query<{ id: string }>(
			`INSERT INTO consent_records (participant_id, decision, form_version_id, confirmations, signed_on, invitation_id, ip_address)
			 VALUES (:participantId, :decision, :formVersionId, :confirmations::jsonb, :signedOn, :linkId, :ip) RETURNING id`,
			{
				replacements: {
					participantId: p.id,
					decision,
					formVersionId: current.id,
					confirmations: JSON.stringify(answers ? current.confirmations : []),
					signedOn: answers?.signedOn ?? null,
					linkId: link.id,
					ip
				},
				type: QueryTypes.SELECT,
				transaction: t
			}
		);
		if (answers) await db().query(`INSERT INTO consent_signatures (record_id, typed_name) VALUES (:id, :name)`, { replacements: { id: rec.id, name: answers.fullName }, transaction: t });
		await markLinkUsed(t, link.id);
		await changeState(t, {
			participant: p,
			to: decision,
			actorUserId: null,
			actorLabel: PARTICIPANT_LABEL,
			formVersionId: current.id,
			note: decision === 'consented' ? `Consent given under form version ${current.version}, signed ${answers!.signedOn}.` : `Declined to take part (form version ${current.version} shown).`
		});
		await record(
			{
				action: decision === 'consented' ? 'consent.given' : 'consent.declined',
				actorLabel: PARTICIPANT_LABEL,
				studyId: p.study_id,
				recordType: 'participant',
				recordId: p.id,
				ipAddress: ip,
				details: { code: p.code, formVersion: current.version, recordId: rec.id }
			},
			t
		);
		const withdrawLink = decision === 'consented' ? await issueLink(t, { participantId: p.id, purpose: 'withdraw', kind: 'confirmation', formVersionId: current.id, sentBy: null }) : null;
		return { p, current, answers, withdrawLink };
	});
	if (wrongParticipant) {
		await record({ action: 'consent.link.refused', actorLabel: PARTICIPANT_LABEL, outcome: 'denied', recordType: 'participant', recordId: wrongParticipant, ipAddress: ip, details: { reason: 'wrong-participant', posted: postedParticipant.slice(0, 64) } });
		throw new FormProblem({ form: 'This form does not belong to the link it was sent with, so nothing was recorded. Open the link from your e-mail again.' }, 'forbidden');
	}
	if (!done) {
		const r = refusedFor as unknown as { reason: LinkRefusal | 'decided'; participantId: string | null; state?: ConsentState };
		return { ok: false, refused: await refusal(r.reason, r.participantId, ip, 'consent.link.refused', r.state) };
	}

	const contact = await studyContact(done.p.study_id);
	const personal = await personalOf(done.p.id);
	let mailed = false;
	if (personal.email) {
		const base = linkBase(event);
		const text =
			done.answers && done.withdrawLink
				? consentCopy(contact, done.current, done.answers, `${base}/consent/withdraw/${done.withdrawLink.token}`)
				: `${personal.fullName ? `Dear ${personal.fullName},` : 'Hello,'}\n\nWe have recorded that you do not wish to take part in the study ${studyLine(contact)}. ` +
					`Thank you for letting us know; we will not contact you again about it.\n\nQuestions: ${contactLine(contact)}.`;
		try {
			await sendMail({ to: personal.email, subject: `${done.answers ? 'Your consent' : 'Your decision'}: study ${contact.studyCode}`.slice(0, 200), text });
			if (done.withdrawLink) await markLinksMailed([done.withdrawLink.id], null);
			mailed = true;
		} catch (err) {
			if (done.withdrawLink) await markLinksMailed([done.withdrawLink.id], (err as Error).message.slice(0, 500));
			await record({ action: 'consent.mail.failed', actorLabel: SYSTEM_LABEL, outcome: 'failed', studyId: done.p.study_id, recordType: 'participant', recordId: done.p.id, details: { kind: 'confirmation', error: (err as Error).message } });
		}
	}
	return { ok: true, decision, mailed, contact, formVersion: done.current.version };
}

/** The plain-text copy of what was agreed, for the participant's own records. */
export function consentCopy(c: StudyContact, form: { version: number; body_markdown: string; confirmations: string[] }, answers: { fullName: string; signedOn: string }, withdrawLink: string): string {
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

export interface WithdrawPage {
	contact: StudyContact;
	state: ConsentState;
	/** What the button records: a withdrawal of given consent, or (before consenting) a decline. */
	effect: 'withdraw' | 'decline' | 'nothing';
}

const WITHDRAW_EFFECT = (s: ConsentState): WithdrawPage['effect'] => (s === 'consented' ? 'withdraw' : s === 'invited' || s === 'expired' ? 'decline' : 'nothing');

export async function withdrawPageFor(token: string, ip: string | null, audit = true): Promise<WithdrawPage | RefusedLink> {
	const check = await checkLink('withdraw', token);
	if (!check.ok) return refusal(check.reason, check.link?.participant_id ?? null, ip, audit ? 'consent.withdraw-link.refused' : null);
	const rows = await db().query<{ study_id: string; state: ConsentState }>(`SELECT p.study_id, ${STATE_SQL} AS state FROM participants p WHERE p.id = :id`, {
		replacements: { id: check.link.participant_id },
		type: QueryTypes.SELECT
	});
	return { contact: await studyContact(rows[0].study_id), state: rows[0].state, effect: WITHDRAW_EFFECT(rows[0].state) };
}

export type WithdrawOutcome = { ok: true; effect: 'withdraw' | 'decline'; mailed: boolean; contact: StudyContact; flaggedRuns: number } | { ok: false; refused: RefusedLink };

/**
 * Withdraws consent from a withdrawal link: new work stops at once (the state changes in this transaction, and
 * work takes a share lock on the participant row), existing runs are flagged for the PI's decision, never deleted.
 */
export async function withdraw(event: RequestEvent, token: string): Promise<WithdrawOutcome> {
	const ip = contextOf(event).ipAddress;
	let refusedFor: { reason: LinkRefusal | 'decided'; participantId: string | null; state?: ConsentState } | null = null;
	const done = await db().transaction(async (t) => {
		const check = await checkLink('withdraw', token, t);
		if (!check.ok) {
			refusedFor = { reason: check.reason, participantId: check.link?.participant_id ?? null };
			return null;
		}
		const p = await lockParticipant(t, check.link.participant_id);
		const effect = WITHDRAW_EFFECT(p.state);
		if (effect === 'nothing') {
			refusedFor = { reason: 'decided', participantId: p.id, state: p.state };
			return null;
		}
		await markLinkUsed(t, check.link.id);
		await revokeOpenConsentLinks(t, p.id);
		const at = fmtDate(new Date());
		const flagged = effect === 'withdraw' ? await flagRunsOfParticipant(p.id, `Consent withdrawn on ${at}`, t) : [];
		await db().query(
			`INSERT INTO consent_records (participant_id, decision, form_version_id, invitation_id, ip_address) VALUES (:id, :decision, :fv, :linkId, :ip)`,
			{ replacements: { id: p.id, decision: effect === 'withdraw' ? 'withdrawn' : 'declined', fv: p.consent_form_version_id, linkId: check.link.id, ip }, transaction: t }
		);
		await changeState(t, {
			participant: p,
			to: effect === 'withdraw' ? 'withdrawn' : 'declined',
			actorUserId: null,
			actorLabel: PARTICIPANT_LABEL,
			note: effect === 'withdraw' ? `Consent withdrawn; ${flagged.length} existing run(s) flagged for the PI's decision.` : 'Declined through the withdrawal link before consenting.'
		});
		await record(
			{
				action: effect === 'withdraw' ? 'consent.withdrawn' : 'consent.declined',
				actorLabel: PARTICIPANT_LABEL,
				studyId: p.study_id,
				recordType: 'participant',
				recordId: p.id,
				ipAddress: ip,
				details: { code: p.code, flaggedRuns: flagged }
			},
			t
		);
		return { p, effect, flagged };
	});
	if (!done) {
		const r = refusedFor as unknown as { reason: LinkRefusal | 'decided'; participantId: string | null; state?: ConsentState };
		return { ok: false, refused: await refusal(r.reason, r.participantId, ip, 'consent.withdraw-link.refused', r.state) };
	}
	const contact = await studyContact(done.p.study_id);
	const personal = await personalOf(done.p.id);
	let mailed = false;
	if (personal.email) {
		const hello = personal.fullName ? `Dear ${personal.fullName},` : 'Hello,';
		const text =
			done.effect === 'withdraw'
				? `${hello}\n\nWe have recorded on ${fmtDate(new Date())} that you withdraw your consent to the study ${studyLine(contact)}.\n\n` +
					`No new recordings or analyses of your data will be made. Results computed before today are set aside; the principal investigator decides, ` +
					`under the rules the ethics board approved for this study, whether they are kept or excluded. Nothing is deleted without that decision.\n\n` +
					`Questions, or if you wish your data to be erased: ${contactLine(contact)}.`
				: `${hello}\n\nWe have recorded that you do not wish to take part in the study ${studyLine(contact)}. We will not contact you again about it.\n\nQuestions: ${contactLine(contact)}.`;
		try {
			await sendMail({ to: personal.email, subject: `${done.effect === 'withdraw' ? 'Your withdrawal' : 'Your decision'}: study ${contact.studyCode}`, text });
			mailed = true;
		} catch (err) {
			await record({ action: 'consent.mail.failed', actorLabel: SYSTEM_LABEL, outcome: 'failed', studyId: done.p.study_id, recordType: 'participant', recordId: done.p.id, details: { kind: 'withdrawal', error: (err as Error).message } });
		}
	}
	return { ok: true, effect: done.effect, mailed, contact, flaggedRuns: done.flagged.length };
}
