// Consent and withdrawal links: 32 random bytes sent once by e-mail, only their SHA-256 hash stored.
import { randomBytes } from 'node:crypto';
import { QueryTypes, type Transaction } from 'sequelize';
import { db } from '../db/index';
import { hashToken } from '../auth/tokens';

/** A consent link works for 14 days; a withdrawal link has no end (people may withdraw at any time). */
export const CONSENT_LINK_LIFETIME_MS = 14 * 24 * 3600_000;
export const CONSENT_LINK_LIFETIME_DAYS = CONSENT_LINK_LIFETIME_MS / 86_400_000;

export type LinkPurpose = 'consent' | 'withdraw';
export type LinkKind = 'invitation' | 'resend' | 'reminder' | 'confirmation' | 'seed';

/** Why a link cannot be used: kept for the audit log and to choose the calm wording of the page. */
export type LinkRefusal = 'unknown' | 'wrong-purpose' | 'used' | 'expired' | 'superseded';

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

export type LinkCheck = { ok: true; link: LinkRow } | { ok: false; reason: LinkRefusal; link: LinkRow | null };

// 32 random bytes in base64url are 43 characters without padding
const SHAPE = /^[A-Za-z0-9_-]{43}$/;

/** Stores a new link and returns its token (the only time it exists in clear text). */
export async function issueLink(
	t: Transaction,
	p: { participantId: string; purpose: LinkPurpose; kind: LinkKind; formVersionId: string | null; sentBy: string | null; now?: Date }
): Promise<{ id: string; token: string; expiresAt: Date | null }> {
	const token = randomBytes(32).toString('base64url');
	const now = p.now ?? new Date();
	const expiresAt = p.purpose === 'consent' ? new Date(now.getTime() + CONSENT_LINK_LIFETIME_MS) : null;
	const [row] = await db().query<{ id: string }>(
		`INSERT INTO consent_invitations (participant_id, form_version_id, purpose, kind, token_hash, expires_at, sent_by, created_at)
		 VALUES (:participantId, :formVersionId, :purpose, :kind, :hash, :expiresAt, :sentBy, :now) RETURNING id`,
		{
			replacements: { participantId: p.participantId, formVersionId: p.formVersionId, purpose: p.purpose, kind: p.kind, hash: hashToken(token), expiresAt, sentBy: p.sentBy, now },
			type: QueryTypes.SELECT,
			transaction: t
		}
	);
	return { id: row.id, token, expiresAt };
}

/** Earlier consent links of the participant stop working: the newest e-mail is the one to use. */
export async function revokeOpenConsentLinks(t: Transaction, participantId: string): Promise<number> {
	const [, n] = await db().query(
		`UPDATE consent_invitations SET revoked_at = now() WHERE participant_id = :participantId AND purpose = 'consent' AND used_at IS NULL AND revoked_at IS NULL`,
		{ replacements: { participantId }, transaction: t }
	);
	return Number((n as { rowCount?: number } | undefined)?.rowCount ?? n ?? 0);
}

/** Looks a link up; with a transaction the row is locked, so two simultaneous uses cannot both succeed. */
export async function checkLink(purpose: LinkPurpose, token: string, t?: Transaction): Promise<LinkCheck> {
	if (!SHAPE.test(token)) return { ok: false, reason: 'unknown', link: null };
	const rows = await db().query<LinkRow>(
		`SELECT id, participant_id, form_version_id, purpose, kind, expires_at, used_at, revoked_at FROM consent_invitations WHERE token_hash = :hash ${t ? 'FOR UPDATE' : ''}`,
		{ replacements: { hash: hashToken(token) }, type: QueryTypes.SELECT, transaction: t }
	);
	const link = rows[0];
	if (!link) return { ok: false, reason: 'unknown', link: null };
	if (link.purpose !== purpose) return { ok: false, reason: 'wrong-purpose', link: null };
	if (link.used_at) return { ok: false, reason: 'used', link };
	if (link.revoked_at) return { ok: false, reason: 'superseded', link };
	if (link.expires_at && link.expires_at.getTime() <= Date.now()) return { ok: false, reason: 'expired', link };
	return { ok: true, link };
}

export async function markLinkUsed(t: Transaction, linkId: string): Promise<void> {
	await db().query(`UPDATE consent_invitations SET used_at = now() WHERE id = :linkId AND used_at IS NULL`, { replacements: { linkId }, transaction: t });
}

/** After the e-mail went out (or failed): when it was sent, or why not. */
export async function markLinksMailed(linkIds: string[], error: string | null): Promise<void> {
	if (linkIds.length === 0) return;
	await db().query(
		error ? `UPDATE consent_invitations SET mail_error = :error WHERE id IN (:linkIds)` : `UPDATE consent_invitations SET sent_at = now(), mail_error = NULL WHERE id IN (:linkIds)`,
		{ replacements: { linkIds, error } }
	);
}
