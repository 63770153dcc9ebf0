// Consent state of a participant and the server-side rule that work needs valid consent (shared contract).
import { error } from '@sveltejs/kit';
import { QueryTypes, type Transaction } from 'sequelize';
import { db } from '../db/index';

export type ConsentState = 'not_invited' | 'invited' | 'consented' | 'declined' | 'withdrawn' | 'expired';
export type ConsentWork = 'upload' | 'run' | 'approval' | 'session';

export const CONSENT_STATES: readonly ConsentState[] = ['not_invited', 'invited', 'consented', 'declined', 'withdrawn', 'expired'];

/** Words for each state, as people see them. */
export const CONSENT_STATE_LABEL: Record<ConsentState, string> = {
	not_invited: 'not invited',
	invited: 'invited',
	consented: 'consented',
	declined: 'declined',
	withdrawn: 'withdrawn',
	expired: 'invitation expired'
};

const WORK_REFUSED: Record<ConsentWork, string> = {
	upload: 'uploads are refused',
	run: 'processing runs are refused',
	approval: 'approvals are refused',
	session: 'new sessions are refused'
};

interface StateRow {
	code: string;
	consent_state: ConsentState;
	consent_state_since: Date | null;
	form_version: number | null;
	open_invitation: boolean;
}

/**
 * The stored state, with "invited" read as "expired" once every consent link sent has lapsed without a decision
 * (the lapse is written to the history lazily by the consent workflow; readers never wait for that).
 */
export const STATE_SQL = `
	CASE WHEN p.consent_state = 'invited' AND NOT EXISTS (
		SELECT 1 FROM consent_invitations ci
		WHERE ci.participant_id = p.id AND ci.purpose = 'consent' AND ci.used_at IS NULL AND ci.revoked_at IS NULL AND ci.expires_at > now()
	) THEN 'expired' ELSE p.consent_state END`;

async function readState(participantId: string, transaction?: Transaction, lock = false): Promise<StateRow | null> {
	// FOR SHARE on the participant row: a withdrawal (which updates that row) waits for the caller's work to commit,
	// and work started after a withdrawal sees it
	const rows = await db().query<StateRow>(
		`SELECT p.code, ${STATE_SQL} AS consent_state, p.consent_state_since, v.version AS form_version
		 FROM participants p LEFT JOIN consent_form_versions v ON v.id = p.consent_form_version_id
		 WHERE p.id = :id ${lock && transaction ? 'FOR SHARE OF p' : ''}`,
		{ replacements: { id: participantId }, type: QueryTypes.SELECT, transaction }
	);
	return rows[0] ?? null;
}

/**
 * Throws SvelteKit error(409, message) naming the reason unless the participant's consent is valid (state consented).
 * Pass a transaction to lock the participant row for the rest of it, so a withdrawal cannot slip in between.
 */
export async function requireValidConsent(participantId: string, work: ConsentWork, transaction?: Transaction): Promise<void> {
	const row = await readState(participantId, transaction, true);
	if (!row) error(404, 'Not found');
	if (row.consent_state === 'consented') return;
	const refused = WORK_REFUSED[work];
	const why: Record<Exclude<ConsentState, 'consented'>, string> = {
		not_invited: `${row.code} has not been asked for consent yet (state: not invited); ${refused} until they consent.`,
		invited: `${row.code} has not given consent (state: invited); ${refused} until they consent.`,
		expired: `${row.code} has not given consent and the invitation has expired (state: expired); ${refused} until they consent.`,
		declined: `${row.code} declined to take part (state: declined); ${refused}.`,
		withdrawn: `${row.code} has withdrawn consent (state: withdrawn); ${refused}. Existing results await the PI's decision.`
	};
	error(409, why[row.consent_state]);
}

/** Where the participant's consent stands, since when, and under which form version (for consent and withdrawal). */
export async function consentStateOf(participantId: string): Promise<{ state: ConsentState; since: Date | null; formVersion: number | null }> {
	const row = await readState(participantId);
	if (!row) return { state: 'not_invited', since: null, formVersion: null };
	return { state: row.consent_state, since: row.consent_state_since, formVersion: row.form_version };
}

/** Consent state of each listed participant (for the participants table). */
export async function consentStatesOf(participantIds: string[]): Promise<Map<string, ConsentState>> {
	if (participantIds.length === 0) return new Map();
	const rows = await db().query<{ id: string; state: ConsentState }>(`SELECT p.id, ${STATE_SQL} AS state FROM participants p WHERE p.id IN (:ids)`, {
		replacements: { ids: participantIds },
		type: QueryTypes.SELECT
	});
	return new Map(rows.map((r) => [r.id, r.state]));
}
