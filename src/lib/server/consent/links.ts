// Consent and withdrawal links: 32 random bytes sent once by e-mail, only their SHA-256 hash stored.
import { randomBytes } from 'node:crypto';
import type { Transaction } from 'sequelize';
import { hashToken } from '../auth/tokens';
import type { LinkKind, LinkPurpose, LinkRefusal } from '../../types/consent';
import { insertLink, linkByHash, type LinkRow } from './queries';

export { markLinksMailed, markLinkUsed, revokeOpenConsentLinks } from './queries';
export type { LinkKind, LinkPurpose, LinkRefusal, LinkRow };

/** A consent link works for 14 days; a withdrawal link has no end (people may withdraw at any time). */
export const CONSENT_LINK_LIFETIME_MS = 14 * 24 * 3600_000;
export const CONSENT_LINK_LIFETIME_DAYS = CONSENT_LINK_LIFETIME_MS / 86_400_000;

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
	const id = await insertLink(t, {
		participantId: p.participantId,
		formVersionId: p.formVersionId,
		purpose: p.purpose,
		kind: p.kind,
		hash: hashToken(token),
		expiresAt,
		sentBy: p.sentBy,
		now
	});
	return { id, token, expiresAt };
}

/** Looks a link up; with a transaction the row is locked, so two simultaneous uses cannot both succeed. */
export async function checkLink(purpose: LinkPurpose, token: string, t?: Transaction): Promise<LinkCheck> {
	if (!SHAPE.test(token)) return { ok: false, reason: 'unknown', link: null };
	const link = await linkByHash(hashToken(token), t);
	if (!link) return { ok: false, reason: 'unknown', link: null };
	if (link.purpose !== purpose) return { ok: false, reason: 'wrong-purpose', link: null };
	if (link.used_at) return { ok: false, reason: 'used', link };
	if (link.revoked_at) return { ok: false, reason: 'superseded', link };
	if (link.expires_at && link.expires_at.getTime() <= Date.now()) return { ok: false, reason: 'expired', link };
	return { ok: true, link };
}
