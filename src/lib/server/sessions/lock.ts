// The lock of an approved session: every route that changes a session, its trials, runs or review data calls this.
import { error } from '@sveltejs/kit';
import type { Transaction } from 'sequelize';
import { db } from '../db/index';
import { Session, type SessionState } from '../db/models';

export const LOCKED_STATES: readonly SessionState[] = ['approved'];

export const lockedMessage = 'This session is approved and locked: nothing in it can be changed. Its PI can reopen it, giving a reason.';

export const isLocked = (state: SessionState | string): boolean => (LOCKED_STATES as readonly string[]).includes(state);

/** Refuses (409) when a session in this state is locked; for callers that already hold the session's row. */
export function refuseIfLocked(state: SessionState | string): void {
	if (isLocked(state)) error(409, lockedMessage);
}

/**
 * Refuses (409) when the session is approved. Pass the transaction of the change, so the check and the change
 * agree: the row is then read FOR SHARE, and an approval (which updates it FOR UPDATE) waits for the change.
 */
export async function assertSessionUnlocked(sessionId: string, transaction?: Transaction): Promise<Session> {
	db();
	const s = await Session.findByPk(sessionId, { transaction, ...(transaction ? { lock: transaction.LOCK.SHARE } : {}) });
	if (!s) error(404, 'Not found');
	refuseIfLocked(s.state);
	return s;
}
