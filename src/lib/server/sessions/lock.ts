// The lock of an approved session: every service that changes a session, its trials, runs or review data calls this.
import type { Transaction } from 'sequelize';
import { Session, type SessionState } from '../db/models';
import { conflict, notFound } from '../errors';

export const LOCKED_STATES: readonly SessionState[] = ['approved'];

export const lockedMessage = 'This session is approved and locked: nothing in it can be changed. Its PI can reopen it, giving a reason.';

export const isLocked = (state: SessionState | string): boolean => (LOCKED_STATES as readonly string[]).includes(state);

/** Refuses (conflict) when a session in this state is locked; for callers that already hold the session's row. */
export function refuseIfLocked(state: SessionState | string): void {
	if (isLocked(state)) throw conflict(lockedMessage);
}

/**
 * Refuses (conflict) when the session is approved. Pass the transaction of the change, so the check and the change
 * agree: the row is then read FOR SHARE, and an approval (which updates it FOR UPDATE) waits for the change.
 */
export async function assertSessionUnlocked(sessionId: string, transaction?: Transaction): Promise<Session> {
	const s = await Session.findByPk(sessionId, { transaction, ...(transaction ? { lock: transaction.LOCK.SHARE } : {}) });
	if (!s) throw notFound();
	refuseIfLocked(s.state);
	return s;
}
