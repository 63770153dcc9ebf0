// The review domain's SQL: done runs with their number and whether each is the newest of its trial (correlated
// subqueries), a run's cycle events (an array column, upserted), and the compare page's pick lists with counts.
import { QueryTypes, type Transaction } from 'sequelize';
import { db } from '../db/index';
import type { EventSet } from '../../types/review';

export interface DoneRunRow {
	id: string;
	trial_id: string;
	file_name: string;
	session_id: string;
	session_on: string;
	participant_id: string;
	participant_code: string;
	number: string | number;
	latest: boolean;
	flag_decision: string | null;
}

/** Done runs that may be reviewed or compared (never those excluded after a consent withdrawal), oldest first. */
function doneRuns(
	where: 's.id = :sid' | 'p.id = :pid AND s.study_id = :studyId',
	replacements: Record<string, string>
): Promise<DoneRunRow[]> {
	return db().query<DoneRunRow>(
		`SELECT r.id, r.trial_id, t.file_name, s.id AS session_id, s.session_on::text AS session_on, p.id AS participant_id, p.code AS participant_code, r.flag_decision,
		        (SELECT count(*) FROM runs o WHERE o.trial_id = r.trial_id AND (o.created_at, o.id) <= (r.created_at, r.id)) AS number,
		        NOT EXISTS (SELECT 1 FROM runs n WHERE n.trial_id = r.trial_id AND n.state = 'done' AND (n.flag_decision IS DISTINCT FROM 'exclude')
		                    AND (n.created_at, n.id) > (r.created_at, r.id)) AS latest
		   FROM runs r JOIN trials t ON t.id = r.trial_id JOIN sessions s ON s.id = t.session_id JOIN participants p ON p.id = s.participant_id
		  WHERE r.state = 'done' AND r.flag_decision IS DISTINCT FROM 'exclude' AND ${where}
		  ORDER BY s.session_on, t.created_at, r.created_at, r.id`,
		{ replacements, type: QueryTypes.SELECT }
	);
}

/** The session's done runs (not excluded), oldest first. */
export const doneRunsOfSession = (sessionId: string) => doneRuns('s.id = :sid', { sid: sessionId });

/** The participant's done runs (not excluded) in the study, oldest first. */
export const doneRunsOfParticipant = (participantId: string, studyId: string) =>
	doneRuns('p.id = :pid AND s.study_id = :studyId', { pid: participantId, studyId });

/** The run's cycle events, or null when none are set. */
export async function eventSetOfRun(runId: string, transaction?: Transaction): Promise<EventSet | null> {
	const rows = await db().query<{ times: number[]; source: EventSet['source']; rule: Record<string, unknown> | null; updated_at: Date }>(
		`SELECT times, source, rule, updated_at FROM cycle_events WHERE run_id = :runId`,
		{ replacements: { runId }, type: QueryTypes.SELECT, transaction }
	);
	const r = rows[0];
	return r ? { times: r.times.map(Number), source: r.source, rule: r.rule, updatedAt: new Date(r.updated_at).toISOString() } : null;
}

/** Replaces the run's events (one row per run); the time they were saved. */
export async function upsertEvents(
	e: { runId: string; times: number[]; source: EventSet['source']; rule: Record<string, unknown> | null; actorId: string },
	transaction: Transaction
): Promise<Date> {
	const rows = await db().query<{ updated_at: Date }>(
		`INSERT INTO cycle_events (run_id, times, source, rule, created_by) VALUES (:runId, ARRAY[:times]::double precision[], :source, CAST(:rule AS jsonb), :actor)
		 ON CONFLICT (run_id) DO UPDATE SET times = EXCLUDED.times, source = EXCLUDED.source, rule = EXCLUDED.rule, created_by = EXCLUDED.created_by, updated_at = now()
		 RETURNING updated_at`,
		{
			replacements: {
				runId: e.runId,
				times: e.times,
				source: e.source,
				rule: e.rule === null ? null : JSON.stringify(e.rule),
				actor: e.actorId
			},
			type: QueryTypes.SELECT,
			transaction
		}
	);
	return rows[0].updated_at;
}

/** The study's participants (codes only) with their number of done, not excluded runs. */
export function participantsWithDoneRuns(studyId: string): Promise<{ id: string; code: string; done: string | number }[]> {
	return db().query<{ id: string; code: string; done: string | number }>(
		`SELECT p.id, p.code, (SELECT count(*) FROM runs r JOIN trials t ON t.id = r.trial_id JOIN sessions s ON s.id = t.session_id
		                        WHERE s.participant_id = p.id AND r.state = 'done' AND r.flag_decision IS DISTINCT FROM 'exclude') AS done
		   FROM participants p WHERE p.study_id = :studyId ORDER BY p.code`,
		{ replacements: { studyId }, type: QueryTypes.SELECT }
	);
}
