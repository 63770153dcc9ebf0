// Results of a participant who withdrew consent: flagged (never deleted) until the PI decides to keep or exclude each run.
import { fn, type Transaction } from 'sequelize';
import { db } from '../db/index';
import { Run } from '../db/models';
import { FormProblem, notFound } from '../errors';
import { recordRunAction } from './runs';
import { isUuid, studyFor, type Actor } from '../access/guard';
import type { RequestContext } from '../access/context';
import { flaggedRowsOf, flaggedRunForDecision, flagRunsOf } from './queries';
import type { FlagDecision, FlaggedRun } from '../../types/runs';

export type { FlagDecision, FlaggedRun };

/**
 * Flags every not yet flagged run of the participant's trials with `reason`; returns the ids flagged.
 * Pass the withdrawal's transaction so the flags and the withdrawal commit together.
 */
export function flagRunsOfParticipant(participantId: string, reason: string, transaction?: Transaction): Promise<string[]> {
	return flagRunsOf(participantId, reason, transaction);
}

/** The participant's flagged runs, oldest session first (decided ones included, with who decided). */
export async function listFlaggedRuns(participantId: string): Promise<FlaggedRun[]> {
	return (await flaggedRowsOf(participantId)).map((r) => ({
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

export interface FlagDecisionInput {
	studyId: string;
	runId: string;
	decision: string;
	note: string;
}

/** The PI keeps or excludes one flagged run of the study; decided once, with an optional note in the audit log. */
export async function decideFlaggedRun(actor: Actor | null, ctx: RequestContext, input: FlagDecisionInput): Promise<void> {
	const { actor: a, study } = await studyFor(actor, ctx, 'consent.decide', input.studyId);
	const { decision } = input;
	if (decision !== 'keep' && decision !== 'exclude') throw new FormProblem({ decision: 'Choose whether to keep or to exclude the run.' });
	const cleanNote = input.note.trim();
	if (cleanNote.length > 1000) throw new FormProblem({ note: 'Keep the note under 1,000 characters.' });
	if (!isUuid(input.runId)) throw notFound();
	const runId = input.runId.toLowerCase();
	await db().transaction(async (transaction) => {
		const run = await flaggedRunForDecision(runId, study.id, transaction);
		if (!run) throw notFound();
		if (!run.flagged_reason) throw new FormProblem({ decision: 'This run is not flagged: there is nothing to decide.' }, 'conflict');
		if (run.flag_decision) throw new FormProblem({ decision: `This run was already decided (${run.flag_decision}).` }, 'conflict');
		await Run.update({ flagDecision: decision, flagDecidedBy: a.id, flagDecidedAt: fn('now') }, { where: { id: run.id }, transaction });
		const details = { participantId: run.participant_id, decision, reason: run.flagged_reason, note: cleanNote || null };
		await recordRunAction(a, ctx, { action: 'run.flag.decided', studyId: study.id, runId: run.id, details }, transaction);
	});
}
