// The review domain's SQL: done runs with their number and whether each is the newest of its trial (correlated
// subqueries), and the compare page's pick lists with counts. Cycle events go through the CycleEvent model.
import { QueryTypes } from 'sequelize';
import { db } from '../db/index';

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

/** The study's participants (codes only) with their number of done, not excluded runs. */
export function participantsWithDoneRuns(studyId: string): Promise<{ id: string; code: string; done: string | number }[]> {
	return db().query<{ id: string; code: string; done: string | number }>(
		`SELECT p.id, p.code, (SELECT count(*) FROM runs r JOIN trials t ON t.id = r.trial_id JOIN sessions s ON s.id = t.session_id
		                        WHERE s.participant_id = p.id AND r.state = 'done' AND r.flag_decision IS DISTINCT FROM 'exclude') AS done
		   FROM participants p WHERE p.study_id = :studyId ORDER BY p.code`,
		{ replacements: { studyId }, type: QueryTypes.SELECT }
	);
}
