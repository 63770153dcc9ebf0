// Results of a participant who withdrew consent: flagged (never deleted) until the PI decides to keep or exclude each run.
import { FormProblem } from '../errors';
import { contextOf } from '../http/edge';
import type { RequestEvent } from '@sveltejs/kit';
import { error } from '@sveltejs/kit';
import { QueryTypes, type Transaction } from 'sequelize';
import { db } from '../db/index';
import { record } from '../audit/record';
import { isUuid } from '../studies/studies';
import { guardStudy } from '../studies/records';

export type FlagDecision = 'keep' | 'exclude';

export interface FlaggedRun {
	id: string;
	state: string;
	createdAt: string;
	fileName: string;
	sessionId: string;
	sessionOn: string;
	reason: string;
	decision: FlagDecision | null;
	decidedAt: string | null;
	decidedBy: string | null;
}

/**
 * Flags every not yet flagged run of the participant's trials with `reason`; returns the ids flagged.
 * Pass the withdrawal's transaction so the flags and the withdrawal commit together.
 */
export async function flagRunsOfParticipant(participantId: string, reason: string, transaction?: Transaction): Promise<string[]> {
	const rows = await db().query<{ id: string }>(
		`UPDATE runs r SET flagged_reason = :reason
		 FROM trials t JOIN sessions s ON s.id = t.session_id
		 WHERE r.trial_id = t.id AND s.participant_id = :participantId AND r.flagged_reason IS NULL
		 RETURNING r.id`,
		{ replacements: { participantId, reason }, type: QueryTypes.SELECT, transaction }
	);
	return rows.map((r) => r.id);
}

interface FlaggedRow {
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

/** The participant's flagged runs, oldest session first (decided ones included, with who decided). */
export async function listFlaggedRuns(participantId: string): Promise<FlaggedRun[]> {
	const rows = await db().query<FlaggedRow>(
		`SELECT r.id, r.state, r.created_at, t.file_name, s.id AS session_id, s.session_on::text AS session_on, r.flagged_reason, r.flag_decision, r.flag_decided_at,
		        coalesce(u.name, u.email) AS decided_by
		 FROM runs r JOIN trials t ON t.id = r.trial_id JOIN sessions s ON s.id = t.session_id LEFT JOIN users u ON u.id = r.flag_decided_by
		 WHERE s.participant_id = :participantId AND r.flagged_reason IS NOT NULL
		 ORDER BY s.session_on, r.created_at`,
		{ replacements: { participantId }, type: QueryTypes.SELECT }
	);
	return rows.map((r) => ({
		id: r.id,
		state: r.state,
		createdAt: r.created_at.toISOString(),
		fileName: r.file_name,
		sessionId: r.session_id,
		sessionOn: r.session_on,
		reason: r.flagged_reason,
		decision: r.flag_decision,
		decidedAt: r.flag_decided_at?.toISOString() ?? null,
		decidedBy: r.decided_by
	}));
}

/** The PI keeps or excludes one flagged run of the study; decided once, with an optional note in the audit log. */
export async function decideFlaggedRun(event: RequestEvent, rawStudyId: string, rawRunId: string, decision: string, note: string): Promise<void> {
	const { actor, study } = await guardStudy(event, 'consent.decide', rawStudyId);
	if (decision !== 'keep' && decision !== 'exclude') throw new FormProblem({ decision: 'Choose whether to keep or to exclude the run.' });
	const cleanNote = note.trim();
	if (cleanNote.length > 1000) throw new FormProblem({ note: 'Keep the note under 1,000 characters.' });
	if (!isUuid(rawRunId)) error(404, 'Not found');
	await db().transaction(async (transaction) => {
		const rows = await db().query<{ id: string; participant_id: string; flagged_reason: string | null; flag_decision: string | null }>(
			`SELECT r.id, s.participant_id, r.flagged_reason, r.flag_decision
			 FROM runs r JOIN trials t ON t.id = r.trial_id JOIN sessions s ON s.id = t.session_id
			 WHERE r.id = :runId AND s.study_id = :studyId FOR UPDATE OF r`,
			{ replacements: { runId: rawRunId.toLowerCase(), studyId: study.id }, type: QueryTypes.SELECT, transaction }
		);
		const run = rows[0];
		if (!run) error(404, 'Not found');
		if (!run.flagged_reason) throw new FormProblem({ decision: 'This run is not flagged: there is nothing to decide.' }, 'conflict');
		if (run.flag_decision) throw new FormProblem({ decision: `This run was already decided (${run.flag_decision}).` }, 'conflict');
		await db().query(`UPDATE runs SET flag_decision = :decision, flag_decided_by = :userId, flag_decided_at = now() WHERE id = :runId`, {
			replacements: { decision, userId: actor.id, runId: run.id },
			transaction
		});
		await record(
			{
				action: 'run.flag.decided',
				actorUserId: actor.id,
				actorLabel: actor.email,
				studyId: study.id,
				recordType: 'run',
				recordId: run.id,
				ipAddress: contextOf(event).ipAddress,
				details: { participantId: run.participant_id, decision, reason: run.flagged_reason, note: cleanNote || null }
			},
			transaction
		);
	});
}
