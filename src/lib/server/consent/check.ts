// Consent state of a participant and the server-side rule that work needs valid consent (shared contract).
import type { Transaction } from 'sequelize';
import { DomainError, notFound } from '../errors';
import { CONSENT_STATE_LABEL, type ConsentState } from '../../types/consent';
import { readState, statesOf } from './queries';

export { CONSENT_STATE_LABEL, type ConsentState };
export type ConsentWork = 'upload' | 'run' | 'approval' | 'session';

const WORK_REFUSED: Record<ConsentWork, string> = {
	upload: 'uploads are refused',
	run: 'processing runs are refused',
	approval: 'approvals are refused',
	session: 'new sessions are refused'
};

/**
 * Throws a conflict DomainError naming the reason unless the participant's consent is valid (state consented);
 * not-found when there is no such participant. Pass a transaction to lock the participant row for the rest of it,
 * so a withdrawal cannot slip in between.
 */
export async function requireValidConsent(participantId: string, work: ConsentWork, transaction?: Transaction): Promise<void> {
	const row = await readState(participantId, transaction, true);
	if (!row) throw notFound();
	if (row.consent_state === 'consented') return;
	const refused = WORK_REFUSED[work];
	const why: Record<Exclude<ConsentState, 'consented'>, string> = {
		not_invited: `${row.code} has not been asked for consent yet (state: not invited); ${refused} until they consent.`,
		invited: `${row.code} has not given consent (state: invited); ${refused} until they consent.`,
		expired: `${row.code} has not given consent and the invitation has expired (state: expired); ${refused} until they consent.`,
		declined: `${row.code} declined to take part (state: declined); ${refused}.`,
		withdrawn: `${row.code} has withdrawn consent (state: withdrawn); ${refused}. Existing results await the PI's decision.`
	};
	throw new DomainError('conflict', why[row.consent_state]);
}

/** Where the participant's consent stands, since when, and under which form version (for consent and withdrawal). */
export async function consentStateOf(
	participantId: string
): Promise<{ state: ConsentState; since: Date | null; formVersion: number | null }> {
	const row = await readState(participantId);
	if (!row) return { state: 'not_invited', since: null, formVersion: null };
	return { state: row.consent_state, since: row.consent_state_since, formVersion: row.form_version };
}

/** Consent state of each listed participant (for the participants table). */
export async function consentStatesOf(participantIds: string[]): Promise<Map<string, ConsentState>> {
	if (participantIds.length === 0) return new Map();
	return new Map((await statesOf(participantIds)).map((r) => [r.id, r.state]));
}
