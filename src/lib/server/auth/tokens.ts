// Single-use e-mailed links (invitations, password resets): random tokens of which only a SHA-256 hash is stored.
import { createHash, randomBytes } from 'node:crypto';
import { Op, type Transaction } from 'sequelize';
import { db } from '../db/index';
import { OneTimeToken } from '../db/models';

export type TokenPurpose = OneTimeToken['purpose'];

/** How long each kind of link stays valid. */
export const TOKEN_LIFETIME_MS: Record<TokenPurpose, number> = {
	invitation: 7 * 24 * 3600_000,
	'password-reset': 3600_000
};

/** Why a link was refused. Kept for the audit log only: people see one calm message for all of them. */
export type TokenRefusal = 'unknown' | 'wrong-purpose' | 'used' | 'expired';

/** The one message a person sees whatever the refusal. */
export const LINK_REFUSED_MESSAGE = 'This link has expired or has already been used';

export type TokenCheck = { ok: true; tokenId: string; userId: string; expiresAt: Date } | { ok: false; reason: TokenRefusal };

// 32 random bytes in base64url are 43 characters without padding
const SHAPE = /^[A-Za-z0-9_-]{43}$/;

export function hashToken(token: string): string {
	return createHash('sha256').update(token, 'utf8').digest('hex');
}

/**
 * Issues a new link token for `userId` and returns it (the only time it exists in clear text).
 * Earlier unused tokens of the same purpose for the same person stop working: the newest e-mail is the one to use.
 */
export async function issueToken(purpose: TokenPurpose, userId: string, transaction?: Transaction, now = new Date()): Promise<string> {
	const token = randomBytes(32).toString('base64url');
	await OneTimeToken.update({ expiresAt: now }, { where: { purpose, userId, usedAt: null, expiresAt: { [Op.gt]: now } }, transaction });
	await OneTimeToken.create(
		{ purpose, userId, tokenHash: hashToken(token), expiresAt: new Date(now.getTime() + TOKEN_LIFETIME_MS[purpose]) },
		{ transaction }
	);
	return token;
}

async function check(purpose: TokenPurpose, token: string, transaction: Transaction | undefined, lock: boolean): Promise<TokenCheck> {
	if (!SHAPE.test(token)) return { ok: false, reason: 'unknown' };
	const row = await OneTimeToken.findOne({
		where: { tokenHash: hashToken(token) },
		transaction,
		lock: lock && transaction ? transaction.LOCK.UPDATE : undefined
	});
	if (!row) return { ok: false, reason: 'unknown' };
	if (row.purpose !== purpose) return { ok: false, reason: 'wrong-purpose' };
	if (row.usedAt) return { ok: false, reason: 'used' };
	if (row.expiresAt.getTime() <= Date.now()) return { ok: false, reason: 'expired' };
	return { ok: true, tokenId: row.id, userId: row.userId, expiresAt: row.expiresAt };
}

/** Looks a token up without using it (to show the page a link opens). */
export function inspectToken(purpose: TokenPurpose, token: string): Promise<TokenCheck> {
	return check(purpose, token, undefined, false);
}

/**
 * Uses a token up. Pass the caller's transaction so that the token is spent only if the change it
 * authorises commits; the row is locked, so two simultaneous uses cannot both succeed.
 */
export async function consume(purpose: TokenPurpose, token: string, transaction?: Transaction): Promise<TokenCheck> {
	const run = async (t: Transaction): Promise<TokenCheck> => {
		const result = await check(purpose, token, t, true);
		if (result.ok) await OneTimeToken.update({ usedAt: new Date() }, { where: { id: result.tokenId, usedAt: null }, transaction: t });
		return result;
	};
	return transaction ? run(transaction) : db().transaction(run);
}
