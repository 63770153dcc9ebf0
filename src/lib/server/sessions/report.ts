// The printable report of a session (any state; marked as a draft unless approved): per trial the exported run,
// its scaled segments, peaks (edge zones left out unless asked for) and joint moments.
import { Participant } from '../db/models';
import type { Actor } from '../access/guard';
import type { RequestContext } from '../access/context';
import { seriesOfRun, storedResultsOf, summaryRows, summaryScope } from '../runs/runs';
import { exportTrials } from './export';
import { studySession, type SessionRef } from './sessions';
import { approvalOf } from './workflow';

export async function sessionReport(actor: Actor | null, ctx: RequestContext, input: SessionRef & { includeEdgeZones: boolean }) {
	const { study, session: s } = await studySession(actor, ctx, 'study.read', input);
	const include = input.includeEdgeZones;
	const p = (await Participant.findByPk(s.participantId, { attributes: ['id', 'code'] }))!;
	const trials = await Promise.all(
		(await exportTrials(s.id)).map(async (t) => {
			const stored = await storedResultsOf(t.run?.id ?? null);
			const { parameters } = stored.modelFields;
			return {
				fileName: t.trial.file_name,
				sampleHz: t.trial.sample_hz,
				frames: t.trial.frame_count,
				sha256: t.trial.sha256,
				run: t.run && { number: t.run.number, options: t.run.options, finishedAt: t.run.finishedAt, flagDecision: t.run.flagDecision },
				segments: parameters?.segments ?? [],
				table: parameters?.table ?? null,
				summary: summaryRows(stored.summary, include),
				summaryScope: summaryScope(stored.edgeZone, include),
				edgeZone: t.run ? stored.edgeZone : null,
				moments: t.run ? await seriesOfRun(t.run.id, { quantity: 'moment', points: 600 }) : null
			};
		})
	);
	return {
		study: { id: study.id, code: study.code, title: study.title, ethicsReference: study.ethicsReference ?? null },
		participant: { code: p.code },
		session: { id: s.id, sessionOn: s.sessionOn, task: s.task, conditions: s.conditions, state: s.state },
		approval: s.state === 'approved' ? await approvalOf(s.id) : null,
		trials,
		includeEdgeZones: include
	};
}
