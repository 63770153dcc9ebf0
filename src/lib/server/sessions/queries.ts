// The sessions domain's SQL that the models do not express well: the history and signing-code tables (no models),
// counts across trials and runs, the work queues, and the row lock of a transition. Typed results, one place.
import { QueryTypes, type Transaction } from 'sequelize';
import { db } from '../db/index';
import type { SessionState } from '../db/models';
import type { HistoryRow, WorkRow } from '../../types/sessions';

const select = <T extends object>(sql: string, replacements: Record<string, unknown>, transaction?: Transaction) =>
	db().query<T>(sql, { replacements, type: QueryTypes.SELECT, transaction });

// ---------------------------------------------------------------------------------------------- history

/** Every transition of the session, oldest first. */
export async function historyRows(sessionId: string): Promise<HistoryRow[]> {
	const rows = await select<{
		at: Date;
		from_state: string | null;
		to_state: string;
		actor: string;
		note: string | null;
		signature_meaning: string | null;
		signature_method: string | null;
	}>(
		`SELECT t.at, t.from_state, t.to_state, coalesce(u.name, t.actor_label) AS actor, t.note, t.signature_meaning, t.signature_method
		 FROM session_transitions t LEFT JOIN users u ON u.id = t.actor_user_id WHERE t.session_id = :sessionId ORDER BY t.at, t.id`,
		{ sessionId }
	);
	return rows.map((r) => ({
		at: new Date(r.at).toISOString(),
		from: r.from_state,
		to: r.to_state,
		actorName: r.actor,
		note: r.note,
		meaning: r.signature_meaning,
		method: r.signature_method
	}));
}

/** The latest approval of a session that is approved now, or null. */
export async function latestApproval(sessionId: string): Promise<{ approvedAt: string; approverName: string; meaning: string } | null> {
	const rows = await select<{ at: Date; actor: string; meaning: string }>(
		`SELECT t.at, coalesce(u.name, t.actor_label) AS actor, t.signature_meaning AS meaning
		 FROM session_transitions t JOIN sessions s ON s.id = t.session_id LEFT JOIN users u ON u.id = t.actor_user_id
		 WHERE t.session_id = :sessionId AND s.state = 'approved' AND t.to_state = 'approved' ORDER BY t.at DESC, t.id DESC LIMIT 1`,
		{ sessionId }
	);
	return rows[0] ? { approvedAt: new Date(rows[0].at).toISOString(), approverName: rows[0].actor, meaning: rows[0].meaning } : null;
}

/** Done runs that count for a review (excluded ones after a withdrawal do not). */
export async function countDoneRuns(sessionId: string, transaction?: Transaction): Promise<number> {
	const rows = await select<{ n: string }>(
		`SELECT count(*) AS n FROM runs r JOIN trials t ON t.id = r.trial_id WHERE t.session_id = :sessionId AND r.state = 'done' AND r.flag_decision IS DISTINCT FROM 'exclude'`,
		{ sessionId },
		transaction
	);
	return Number(rows[0]?.n ?? 0);
}

/** The session's state, its row locked FOR UPDATE for the rest of the transaction. */
export async function lockSessionState(sessionId: string, transaction: Transaction): Promise<SessionState> {
	const rows = await select<{ state: SessionState }>(
		`SELECT state FROM sessions WHERE id = :id FOR UPDATE`,
		{ id: sessionId },
		transaction
	);
	return rows[0].state;
}

export async function setSessionState(sessionId: string, to: SessionState, transaction: Transaction): Promise<void> {
	await db().query(`UPDATE sessions SET state = :to, updated_at = now() WHERE id = :id`, {
		replacements: { to, id: sessionId },
		transaction
	});
}

export interface TransitionRow {
	sessionId: string;
	from: SessionState;
	to: SessionState;
	actorUserId: string;
	actorLabel: string;
	note: string | null;
	meaning: string | null;
	method: string | null;
}

/** Adds a history row; its id. */
export async function insertTransition(t: TransitionRow, transaction: Transaction): Promise<string> {
	const rows = await select<{ id: string }>(
		`INSERT INTO session_transitions (session_id, from_state, to_state, actor_user_id, actor_label, note, signature_meaning, signature_method)
		 VALUES (:sid, :from, :to, :uid, :label, :note, :meaning, :method) RETURNING id`,
		{
			sid: t.sessionId,
			from: t.from,
			to: t.to,
			uid: t.actorUserId,
			label: t.actorLabel,
			note: t.note,
			meaning: t.meaning,
			method: t.method
		},
		transaction
	);
	return rows[0].id;
}

// ---------------------------------------------------------------------------------------------- signing codes

/** When the person's newest usable code for this session expires, or null. */
export async function pendingCodeExpiry(userId: string, sessionId: string): Promise<Date | null> {
	const rows = await select<{ expires_at: Date }>(
		`SELECT expires_at FROM signature_codes WHERE user_id = :u AND session_id = :s AND used_at IS NULL AND expires_at > now() ORDER BY created_at DESC LIMIT 1`,
		{ u: userId, s: sessionId }
	);
	return rows[0] ? new Date(rows[0].expires_at) : null;
}

/** The person's usable codes for this session, newest first. */
export const usableCodes = (userId: string, sessionId: string) =>
	select<{ id: string; code_hash: string; salt: string }>(
		`SELECT id, code_hash, salt FROM signature_codes WHERE user_id = :u AND session_id = :s AND used_at IS NULL AND expires_at > now() ORDER BY created_at DESC`,
		{ u: userId, s: sessionId }
	);

/** Codes the person asked for in the last `minutes`. */
export async function countRecentCodes(userId: string, sessionId: string, minutes: number): Promise<number> {
	const rows = await select<{ n: string }>(
		`SELECT count(*) AS n FROM signature_codes WHERE user_id = :u AND session_id = :s AND created_at > now() - make_interval(mins => :w)`,
		{
			u: userId,
			s: sessionId,
			w: minutes
		}
	);
	return Number(rows[0]?.n ?? 0);
}

/** Stores a new code, ending any earlier usable one for this session; its expiry. */
export async function replaceCode(
	userId: string,
	sessionId: string,
	codeHash: string,
	salt: string,
	minutes: number,
	transaction: Transaction
): Promise<Date> {
	await db().query(
		`UPDATE signature_codes SET expires_at = now() WHERE user_id = :u AND session_id = :s AND used_at IS NULL AND expires_at > now()`,
		{
			replacements: { u: userId, s: sessionId },
			transaction
		}
	);
	const rows = await select<{ id: string; expires_at: Date }>(
		`INSERT INTO signature_codes (user_id, session_id, code_hash, salt, expires_at) VALUES (:u, :s, :h, :salt, now() + make_interval(mins => :m)) RETURNING id, expires_at`,
		{ u: userId, s: sessionId, h: codeHash, salt, m: minutes },
		transaction
	);
	return new Date(rows[0].expires_at);
}

/** Marks a code used; false when it was used (or expired) a moment ago. */
export async function useCode(codeId: string, transaction: Transaction): Promise<boolean> {
	const rows = await select<{ id: string }>(
		`UPDATE signature_codes SET used_at = now() WHERE id = :id AND used_at IS NULL AND expires_at > now() RETURNING id`,
		{ id: codeId },
		transaction
	);
	return rows.length > 0;
}

// ---------------------------------------------------------------------------------------------- e-mail recipients

/** The study's active PIs other than `exceptUserId`. */
export async function piEmails(studyId: string, exceptUserId: string): Promise<string[]> {
	const rows = await select<{ email: string }>(
		`SELECT u.email FROM study_members m JOIN users u ON u.id = m.user_id WHERE m.study_id = :study AND m.role = 'pi' AND u.deactivated_at IS NULL AND u.id <> :me`,
		{ study: studyId, me: exceptUserId }
	);
	return rows.map((r) => r.email);
}

/** The active person who last submitted the session, if any. */
export async function lastSubmitterEmails(sessionId: string): Promise<string[]> {
	const rows = await select<{ email: string }>(
		`SELECT u.email FROM session_transitions t JOIN users u ON u.id = t.actor_user_id
		 WHERE t.session_id = :sid AND t.to_state = 'in_review' AND u.deactivated_at IS NULL ORDER BY t.at DESC LIMIT 1`,
		{ sid: sessionId }
	);
	return rows.map((r) => r.email);
}

// ---------------------------------------------------------------------------------------------- work queues

const WORK_COLUMNS = `s.study_id AS "studyId", st.code AS "studyCode", s.id AS "sessionId", p.code AS "participantCode", to_char(s.session_on, 'YYYY-MM-DD') AS "sessionOn", s.state`;
const WORK_FROM = `FROM sessions s JOIN studies st ON st.id = s.study_id JOIN participants p ON p.id = s.participant_id`;

const SQL_QUEUE = {
	approve: `SELECT ${WORK_COLUMNS}, 'submitted for your approval' AS why ${WORK_FROM} WHERE s.study_id IN (:ids) AND s.state = 'in_review' ORDER BY s.updated_at LIMIT :limit`,
	returned: `SELECT ${WORK_COLUMNS}, 'returned by the PI with a comment' AS why ${WORK_FROM} WHERE s.study_id IN (:ids) AND s.state = 'returned' ORDER BY s.updated_at LIMIT :limit`,
	recordings: `SELECT ${WORK_COLUMNS},
	   CASE WHEN NOT EXISTS (SELECT 1 FROM trials t WHERE t.session_id = s.id) THEN 'no trial yet' ELSE 'latest run failed' END AS why
	 ${WORK_FROM}
	 WHERE s.study_id IN (:ids) AND s.state IN ('draft', 'returned') AND (
	   NOT EXISTS (SELECT 1 FROM trials t WHERE t.session_id = s.id)
	   OR EXISTS (SELECT 1 FROM trials t WHERE t.session_id = s.id AND (SELECT r.state FROM runs r WHERE r.trial_id = t.id ORDER BY r.created_at DESC, r.id DESC LIMIT 1) = 'failed'))
	 ORDER BY s.session_on, s.created_at LIMIT :limit`
};

/** Sessions in the given studies waiting in one queue: to approve (in review), returned, or recordings to do. */
export async function workQueue(queue: keyof typeof SQL_QUEUE, studyIds: string[], limit: number): Promise<WorkRow[]> {
	return studyIds.length ? select<WorkRow>(SQL_QUEUE[queue], { ids: studyIds, limit }) : [];
}

// ---------------------------------------------------------------------------------------------- export

export interface ExportTrialRow {
	id: string;
	file_name: string;
	sha256: string;
	raw_upload_id: string;
	byte_size: string | number;
	sample_hz: number;
	frame_count: number;
	duration_s: number;
	channels: string[];
	/** The trial's force recording (all null without one; the angle file's own upload when it carries the plate columns). */
	force_raw_upload_id: string | null;
	force_file_name: string | null;
	force_sha256: string | null;
	force_sample_hz: number | null;
	force_plates: string[] | null;
	force_byte_size: string | number | null;
}

/** The session's trials, oldest first, with the size of each raw upload (and of its force file's). */
export const exportTrialRows = (sessionId: string) =>
	select<ExportTrialRow>(
		`SELECT t.id, t.file_name, t.sha256, t.raw_upload_id, u.byte_size, t.sample_hz, t.frame_count, t.duration_s, t.channels,
		        t.force_raw_upload_id, t.force_file_name, t.force_sha256, t.force_sample_hz, t.force_plates, fu.byte_size AS force_byte_size
		 FROM trials t JOIN raw_uploads u ON u.id = t.raw_upload_id LEFT JOIN raw_uploads fu ON fu.id = t.force_raw_upload_id
		 WHERE t.session_id = :sessionId ORDER BY t.created_at, t.id`,
		{ sessionId }
	);
