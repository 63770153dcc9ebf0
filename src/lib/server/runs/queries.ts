// The runs domain's SQL that the models do not express well: run numbers within a trial (a correlated count), the
// trial/session/participant context of a trial or run, results written as binary, the atomic claim of a run by an
// attempt, and flags set across a participant's trials. Typed results; every other access goes through the models.
import { QueryTypes, type Transaction } from 'sequelize';
import { db } from '../db/index';
import { storedOptionsSchema } from '../db/run-json';
import type { FlagDecision, RunView } from '../../types/runs';
import type { SeriesRow } from './compute';

/** A run row as read, with its number within the trial (a count, as pg returns it) and its times as dates. */
export type RunRow = Omit<RunView, 'number' | 'createdAt' | 'startedAt' | 'finishedAt'> & {
	number: string | number;
	createdAt: Date;
	startedAt: Date | null;
	finishedAt: Date | null;
};

/** A run row as pg returns it, its options still JSON; readRunRow reads them with the Run model's schema for them. */
type StoredRunRow = Omit<RunRow, 'options'> & { options: unknown };
const readRunRow = (row: StoredRunRow): RunRow => ({ ...row, options: storedOptionsSchema.parse(row.options) });

const RUN_COLUMNS = `r.id, r.trial_id AS "trialId", r.state, r.progress, r.stage, r.options, r.error, r.attempts, r.created_at AS "createdAt", r.started_at AS "startedAt",
	r.finished_at AS "finishedAt", r.raw_sha256 AS "rawSha256", r.software_version AS "softwareVersion", r.flagged_reason AS "flaggedReason", r.flag_decision AS "flagDecision",
	(SELECT count(*) FROM runs o WHERE o.trial_id = r.trial_id AND (o.created_at, o.id) <= (r.created_at, r.id)) AS number`;

/** Every run of the session's trials, oldest first. */
export async function runRowsOfSession(sessionId: string): Promise<RunRow[]> {
	const rows = await db().query<StoredRunRow>(
		`SELECT ${RUN_COLUMNS} FROM runs r JOIN trials t ON t.id = r.trial_id WHERE t.session_id = :sessionId ORDER BY r.created_at, r.id`,
		{ replacements: { sessionId }, type: QueryTypes.SELECT }
	);
	return rows.map(readRunRow);
}

export async function runRowById(runId: string, transaction?: Transaction): Promise<RunRow | null> {
	const rows = await db().query<StoredRunRow>(`SELECT ${RUN_COLUMNS} FROM runs r WHERE r.id = :runId`, {
		replacements: { runId },
		type: QueryTypes.SELECT,
		transaction
	});
	return rows.length ? readRunRow(rows[0]) : null;
}

/** What processing and the pages need of a trial: its session, study, participant, raw file, mapping and set-up. */
export interface TrialContext {
	trialId: string;
	sessionId: string;
	studyId: string;
	participantId: string;
	participantCode: string;
	rawUploadId: string;
	fileName: string;
	sha256: string;
	mapping: unknown;
	setup: unknown;
	sessionState: string;
	sampleHz: number;
	channels: string[];
	/** The trial's force file (migration 0011), all null without one. */
	forceRawUploadId: string | null;
	forceFileName: string | null;
	forceSha256: string | null;
	forcePlates: string[] | null;
	forceMapping: unknown;
}

const TRIAL_CONTEXT = `SELECT t.id AS "trialId", s.id AS "sessionId", s.study_id AS "studyId", s.participant_id AS "participantId", p.code AS "participantCode",
	t.raw_upload_id AS "rawUploadId", t.file_name AS "fileName", t.sha256, t.mapping, s.setup, s.state AS "sessionState", t.sample_hz AS "sampleHz", t.channels,
	t.force_raw_upload_id AS "forceRawUploadId", t.force_file_name AS "forceFileName", t.force_sha256 AS "forceSha256", t.force_plates AS "forcePlates", t.force_mapping AS "forceMapping"
	FROM trials t JOIN sessions s ON s.id = t.session_id JOIN participants p ON p.id = s.participant_id`;

/** The trial's context when it belongs to the study, else null. */
export async function trialContextInStudy(trialId: string, studyId: string): Promise<TrialContext | null> {
	const rows = await db().query<TrialContext>(`${TRIAL_CONTEXT} WHERE t.id = :trialId AND s.study_id = :studyId`, {
		replacements: { trialId, studyId },
		type: QueryTypes.SELECT
	});
	return rows[0] ?? null;
}

/** The context of the run's trial, or null when there is no such run. */
export async function trialContextOfRun(runId: string): Promise<(TrialContext & { runId: string }) | null> {
	const rows = await db().query<TrialContext & { runId: string }>(
		`${TRIAL_CONTEXT.replace('SELECT ', 'SELECT r.id AS "runId", ')} JOIN runs r ON r.trial_id = t.id WHERE r.id = :runId`,
		{ replacements: { runId }, type: QueryTypes.SELECT }
	);
	return rows[0] ?? null;
}

/** The session of a trial of the study, or null. */
export async function sessionIdOfTrial(trialId: string, studyId: string): Promise<string | null> {
	const rows = await db().query<{ id: string }>(
		`SELECT s.id FROM trials t JOIN sessions s ON s.id = t.session_id WHERE t.id = :t AND s.study_id = :s`,
		{
			replacements: { t: trialId, s: studyId },
			type: QueryTypes.SELECT
		}
	);
	return rows[0]?.id ?? null;
}

/** The newest done run of each trial of the session. */
export function latestDoneRunPerTrial(sessionId: string): Promise<{ trial_id: string; id: string }[]> {
	return db().query<{ trial_id: string; id: string }>(
		`SELECT DISTINCT ON (r.trial_id) r.trial_id, r.id FROM runs r JOIN trials t ON t.id = r.trial_id
		 WHERE t.session_id = :sessionId AND r.state = 'done' ORDER BY r.trial_id, r.created_at DESC, r.id DESC`,
		{ replacements: { sessionId }, type: QueryTypes.SELECT }
	);
}

/**
 * An attempt claims the run (any state but done): running, attempts + 1, progress cleared. Returns the attempt's
 * number and the stored options, or null when the run is done or gone.
 */
export async function claimRun(runId: string): Promise<{ attempts: number; options: unknown } | null> {
	const rows = await db().query<{ attempts: number; options: unknown }>(
		`UPDATE runs SET state = 'running', attempts = attempts + 1, started_at = now(), finished_at = NULL, progress = 0, stage = 'checking consent', error = NULL
		 WHERE id = :runId AND state <> 'done' RETURNING attempts, options`,
		{ replacements: { runId }, type: QueryTypes.SELECT }
	);
	return rows[0] ?? null;
}

/** One insert per series with bind parameters, so pg sends the bytes as binary (not as hex text twice their size). */
export async function insertSeries(runId: string, series: SeriesRow[], transaction: Transaction): Promise<void> {
	for (const s of series) {
		await db().query('INSERT INTO run_series (run_id, name, quantity, unit, components, data) VALUES ($1, $2, $3, $4, $5, $6)', {
			bind: [runId, s.name, s.quantity, s.unit, s.components, s.data],
			type: QueryTypes.INSERT,
			transaction
		});
	}
}

// ---------------------------------------------------------------------------------------------- flags

/** Flags every not yet flagged run of the participant's trials; the ids flagged. */
export async function flagRunsOf(participantId: string, reason: string, transaction?: Transaction): Promise<string[]> {
	const rows = await db().query<{ id: string }>(
		`UPDATE runs r SET flagged_reason = :reason
		 FROM trials t JOIN sessions s ON s.id = t.session_id
		 WHERE r.trial_id = t.id AND s.participant_id = :participantId AND r.flagged_reason IS NULL
		 RETURNING r.id`,
		{ replacements: { participantId, reason }, type: QueryTypes.SELECT, transaction }
	);
	return rows.map((r) => r.id);
}

export interface FlaggedRow {
	id: string;
	state: string;
	created_at: Date;
	file_name: string;
	session_id: string;
	session_on: string;
	flagged_reason: string;
	flag_decision: FlagDecision | null;
	flag_decided_at: Date | null;
	decided_by: string | null;
}

/** The participant's flagged runs, oldest session first, with who decided. */
export function flaggedRowsOf(participantId: string): Promise<FlaggedRow[]> {
	return db().query<FlaggedRow>(
		`SELECT r.id, r.state, r.created_at, t.file_name, s.id AS session_id, s.session_on::text AS session_on, r.flagged_reason, r.flag_decision, r.flag_decided_at,
		        coalesce(u.name, u.email) AS decided_by
		 FROM runs r JOIN trials t ON t.id = r.trial_id JOIN sessions s ON s.id = t.session_id LEFT JOIN users u ON u.id = r.flag_decided_by
		 WHERE s.participant_id = :participantId AND r.flagged_reason IS NOT NULL
		 ORDER BY s.session_on, r.created_at`,
		{ replacements: { participantId }, type: QueryTypes.SELECT }
	);
}

/** A run of the study locked for its flag decision (FOR UPDATE of the run), with its participant; null if none. */
export async function flaggedRunForDecision(
	runId: string,
	studyId: string,
	transaction: Transaction
): Promise<{ id: string; participant_id: string; flagged_reason: string | null; flag_decision: string | null } | null> {
	const rows = await db().query<{ id: string; participant_id: string; flagged_reason: string | null; flag_decision: string | null }>(
		`SELECT r.id, s.participant_id, r.flagged_reason, r.flag_decision
		 FROM runs r JOIN trials t ON t.id = r.trial_id JOIN sessions s ON s.id = t.session_id
		 WHERE r.id = :runId AND s.study_id = :studyId FOR UPDATE OF r`,
		{ replacements: { runId, studyId }, type: QueryTypes.SELECT, transaction }
	);
	return rows[0] ?? null;
}
