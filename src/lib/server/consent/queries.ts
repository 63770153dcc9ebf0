// The consent domain's SQL: the participant's consent columns, the links table, the history and the records of
// decisions. Raw SQL here because these read the lapsed-invitation state with a correlated subquery and take row
// locks (FOR SHARE / FOR UPDATE OF p) that the workflow's correctness depends on; everything else uses the models.
import { QueryTypes, type Transaction } from 'sequelize';
import { db } from '../db/index';
import type { ConsentState, LinkKind, LinkPurpose } from '../../types/consent';

/**
 * The stored state, with "invited" read as "expired" once every consent link sent has lapsed without a decision
 * (the lapse is written to the history lazily by the consent workflow; readers never wait for that).
 */
export const STATE_SQL = `
	CASE WHEN p.consent_state = 'invited' AND NOT EXISTS (
		SELECT 1 FROM consent_invitations ci
		WHERE ci.participant_id = p.id AND ci.purpose = 'consent' AND ci.used_at IS NULL AND ci.revoked_at IS NULL AND ci.expires_at > now()
	) THEN 'expired' ELSE p.consent_state END`;

const select = <T extends object>(sql: string, replacements: Record<string, unknown>, transaction?: Transaction) =>
	db().query<T>(sql, { replacements, type: QueryTypes.SELECT, transaction });
const run = (sql: string, replacements: Record<string, unknown>, transaction?: Transaction) =>
	db().query(sql, { replacements, transaction });

// ---------------------------------------------------------------- the participant's state

export interface StateRow {
	code: string;
	consent_state: ConsentState;
	consent_state_since: Date | null;
	form_version: number | null;
}

/**
 * The participant's state and form version. With `lock` and a transaction, FOR SHARE on the participant row: a
 * withdrawal (which updates that row) waits for the caller's work to commit, and work started after it sees it.
 */
export async function readState(participantId: string, transaction?: Transaction, lock = false): Promise<StateRow | null> {
	const rows = await select<StateRow>(
		`SELECT p.code, ${STATE_SQL} AS consent_state, p.consent_state_since, v.version AS form_version
		 FROM participants p LEFT JOIN consent_form_versions v ON v.id = p.consent_form_version_id
		 WHERE p.id = :id ${lock && transaction ? 'FOR SHARE OF p' : ''}`,
		{ id: participantId },
		transaction
	);
	return rows[0] ?? null;
}

/** The state of each listed participant. */
export async function statesOf(participantIds: string[]): Promise<{ id: string; state: ConsentState }[]> {
	return select<{ id: string; state: ConsentState }>(`SELECT p.id, ${STATE_SQL} AS state FROM participants p WHERE p.id IN (:ids)`, {
		ids: participantIds
	});
}

/** The participant's study and state as readers see it (expired when every link lapsed). */
export async function studyAndStateOf(
	participantId: string
): Promise<{ study_id: string; state: ConsentState; stored_state: ConsentState } | null> {
	const rows = await select<{ study_id: string; state: ConsentState; stored_state: ConsentState }>(
		`SELECT p.study_id, ${STATE_SQL} AS state, p.consent_state AS stored_state FROM participants p WHERE p.id = :id`,
		{ id: participantId }
	);
	return rows[0] ?? null;
}

export interface LockedParticipant {
	id: string;
	study_id: string;
	code: string;
	stored_state: ConsentState;
	state: ConsentState;
	consent_state_since: Date | null;
	consent_form_version_id: string | null;
}

/** The participant row, locked for the rest of the transaction (state changes take turns). */
export async function lockParticipant(t: Transaction, participantId: string): Promise<LockedParticipant | null> {
	const rows = await select<LockedParticipant>(
		`SELECT p.id, p.study_id, p.code, p.consent_state AS stored_state, ${STATE_SQL} AS state, p.consent_state_since, p.consent_form_version_id
		 FROM participants p WHERE p.id = :participantId FOR UPDATE OF p`,
		{ participantId },
		t
	);
	return rows[0] ?? null;
}

/** Writes the new state on the participant and appends the history row, in the caller's transaction. */
export async function writeStateChange(
	t: Transaction,
	c: {
		participantId: string;
		from: ConsentState;
		to: ConsentState;
		actorUserId: string | null;
		actorLabel: string;
		formVersionId: string | null;
		note: string | null;
	}
): Promise<void> {
	await run(
		`UPDATE participants SET consent_state = :to, consent_state_since = now(), consent_form_version_id = coalesce(:formVersionId, consent_form_version_id) WHERE id = :id`,
		{ to: c.to, formVersionId: c.formVersionId, id: c.participantId },
		t
	);
	await run(
		`INSERT INTO consent_events (participant_id, from_state, to_state, actor_user_id, actor_label, form_version, note)
		 VALUES (:participantId, :from, :to, :actorUserId, :actorLabel,
		         (SELECT version FROM consent_form_versions WHERE id = coalesce(:formVersionId, (SELECT consent_form_version_id FROM participants WHERE id = :participantId))), :note)`,
		{
			participantId: c.participantId,
			from: c.from,
			to: c.to,
			actorUserId: c.actorUserId,
			actorLabel: c.actorLabel,
			formVersionId: c.formVersionId,
			note: c.note
		},
		t
	);
}

export interface ConsentEventRow {
	at: Date;
	from_state: ConsentState;
	to_state: ConsentState;
	actor_label: string;
	form_version: number | null;
	note: string | null;
}

/** The participant's consent history, newest first. */
export const historyOf = (participantId: string) =>
	select<ConsentEventRow>(
		`SELECT at, from_state, to_state, actor_label, form_version, note FROM consent_events WHERE participant_id = :id ORDER BY at DESC, id DESC`,
		{ id: participantId }
	);

// ---------------------------------------------------------------- the study's contact

export interface ContactRow {
	id: string;
	code: string;
	title: string;
	ethics_reference: string | null;
	pi_name: string | null;
	pi_email: string | null;
}

/** The study and its first active principal investigator (whom participants contact). */
export async function contactRowOf(studyId: string, t?: Transaction): Promise<ContactRow | null> {
	const rows = await select<ContactRow>(
		`SELECT s.id, s.code, s.title, s.ethics_reference,
		        (SELECT coalesce(u.name, u.email) FROM study_members m JOIN users u ON u.id = m.user_id WHERE m.study_id = s.id AND m.role = 'pi' AND u.deactivated_at IS NULL ORDER BY m.created_at LIMIT 1) AS pi_name,
		        (SELECT u.email FROM study_members m JOIN users u ON u.id = m.user_id WHERE m.study_id = s.id AND m.role = 'pi' AND u.deactivated_at IS NULL ORDER BY m.created_at LIMIT 1) AS pi_email
		 FROM studies s WHERE s.id = :studyId`,
		{ studyId },
		t
	);
	return rows[0] ?? null;
}

// ---------------------------------------------------------------- links (consent_invitations)

export interface LinkRow {
	id: string;
	participant_id: string;
	form_version_id: string | null;
	purpose: LinkPurpose;
	kind: LinkKind;
	expires_at: Date | null;
	used_at: Date | null;
	revoked_at: Date | null;
}

export async function insertLink(
	t: Transaction,
	l: {
		participantId: string;
		formVersionId: string | null;
		purpose: LinkPurpose;
		kind: LinkKind;
		hash: string;
		expiresAt: Date | null;
		sentBy: string | null;
		now: Date;
	}
): Promise<string> {
	const [row] = await select<{ id: string }>(
		`INSERT INTO consent_invitations (participant_id, form_version_id, purpose, kind, token_hash, expires_at, sent_by, created_at)
		 VALUES (:participantId, :formVersionId, :purpose, :kind, :hash, :expiresAt, :sentBy, :now) RETURNING id`,
		l,
		t
	);
	return row.id;
}

/** Marks the participant's open consent links revoked; returns how many. */
export async function revokeOpenConsentLinks(t: Transaction, participantId: string): Promise<number> {
	const [, n] = await run(
		`UPDATE consent_invitations SET revoked_at = now() WHERE participant_id = :participantId AND purpose = 'consent' AND used_at IS NULL AND revoked_at IS NULL`,
		{ participantId },
		t
	);
	return Number((n as { rowCount?: number } | undefined)?.rowCount ?? n ?? 0);
}

/** The link with this token hash; with a transaction the row is locked (FOR UPDATE). */
export async function linkByHash(hash: string, t?: Transaction): Promise<LinkRow | null> {
	const rows = await select<LinkRow>(
		`SELECT id, participant_id, form_version_id, purpose, kind, expires_at, used_at, revoked_at FROM consent_invitations WHERE token_hash = :hash ${t ? 'FOR UPDATE' : ''}`,
		{ hash },
		t
	);
	return rows[0] ?? null;
}

export async function markLinkUsed(t: Transaction, linkId: string): Promise<void> {
	await run(`UPDATE consent_invitations SET used_at = now() WHERE id = :linkId AND used_at IS NULL`, { linkId }, t);
}

/** After the e-mail went out (error null) or failed (its message). */
export async function markLinksMailed(linkIds: string[], error: string | null): Promise<void> {
	if (linkIds.length === 0) return;
	await run(
		error
			? `UPDATE consent_invitations SET mail_error = :error WHERE id IN (:linkIds)`
			: `UPDATE consent_invitations SET sent_at = now(), mail_error = NULL WHERE id IN (:linkIds)`,
		{ linkIds, error }
	);
}

export interface SentLinkRow {
	kind: LinkKind;
	purpose: LinkPurpose;
	created_at: Date;
	sent_at: Date | null;
	expires_at: Date | null;
	used_at: Date | null;
	revoked_at: Date | null;
	mail_error: string | null;
}

/** The links sent to the participant (not the seed's), newest first. */
export const sentLinksOf = (participantId: string) =>
	select<SentLinkRow>(
		`SELECT kind, purpose, created_at, sent_at, expires_at, used_at, revoked_at, mail_error FROM consent_invitations WHERE participant_id = :id AND kind <> 'seed' ORDER BY created_at DESC`,
		{ id: participantId }
	);

// ---------------------------------------------------------------- decisions

/** A decision taken through a link (consent and decline carry the confirmations and the date signed). */
export async function insertConsentRecord(
	t: Transaction,
	r: {
		participantId: string;
		decision: 'consented' | 'declined' | 'withdrawn';
		formVersionId: string | null;
		confirmations: string[];
		signedOn: string | null;
		linkId: string;
		ip: string | null;
	}
): Promise<string> {
	const [row] = await select<{ id: string }>(
		`INSERT INTO consent_records (participant_id, decision, form_version_id, confirmations, signed_on, invitation_id, ip_address)
		 VALUES (:participantId, :decision, :formVersionId, :confirmations::jsonb, :signedOn, :linkId, :ip) RETURNING id`,
		{ ...r, confirmations: JSON.stringify(r.confirmations) },
		t
	);
	return row.id;
}

export async function insertSignature(t: Transaction, recordId: string, typedName: string): Promise<void> {
	await run(`INSERT INTO consent_signatures (record_id, typed_name) VALUES (:id, :name)`, { id: recordId, name: typedName }, t);
}
