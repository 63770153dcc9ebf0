// The lock of an approved session: every route that changes a session, its trials, runs or review data calls this.
import { error } from '@sveltejs/kit';
import type { Transaction } from 'sequelize';
import { db } from './db/index';
import { Session, type SessionState } from './db/models';

export const LOCKED_STATES: readonly SessionState[] = ['approved'];

export const lockedMessage = 'This session is approved and locked: nothing in it can be changed. Its PI can reopen it, giving a reason.';

/** Refuses (409) when the session is approved. Pass the transaction of the change, so the check and the change agree. */
export async function assertSessionUnlocked(sessionId: string, transaction?: Transaction): Promise<Session> {
	db();
	const s = await Session.findByPk(sessionId, { transaction, ...(transaction ? { lock: transaction.LOCK.SHARE } : {}) });
	if (!s) error(404, 'Not found');
	if (LOCKED_STATES.includes(s.state)) error(409, lockedMessage);
	return s;
}
