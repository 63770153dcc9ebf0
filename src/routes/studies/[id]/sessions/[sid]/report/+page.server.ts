// The printable report of a session (any state; marked as a draft unless approved).
import { guardStudy } from '$lib/server/studies/records';
import { sessionIn } from '$lib/server/sessions/sessions';
import { exportTrials } from '$lib/server/sessions/export';
import { approvalOf } from '$lib/server/sessions/workflow';
import { includeEdgeZonesOf, seriesOfRun, summaryRows, summaryScope } from '$lib/server/runs/runs';
import { edgeZoneView } from '$lib/processing/zone-exclusion';
import { Participant, Run } from '$lib/server/db/models';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { study } = await guardStudy(event, 'study.read', event.params.id);
	const s = await sessionIn(study.id, event.params.sid);
	const p = (await Participant.findByPk(s.participantId, { attributes: ['id', 'code'] }))!;
	// peaks leave the edge zones out unless ?includeEdgeZones=1
	const include = includeEdgeZonesOf(event.url.searchParams);
	const trials = await Promise.all(
		(await exportTrials(s.id)).map(async (t) => {
			const row = t.run ? await Run.findByPk(t.run.id, { attributes: ['summary', 'model', 'edgeZone'] }) : null;
			const edgeZone = edgeZoneView(row?.edgeZone);
			const model = (row?.model ?? null) as { parameters?: { segments?: unknown[]; table?: { id: string; title: string; citation: string } } } | null;
			return {
				fileName: t.trial.file_name,
				sampleHz: t.trial.sample_hz,
				frames: t.trial.frame_count,
				sha256: t.trial.sha256,
				run: t.run && { number: t.run.number, options: t.run.options, finishedAt: t.run.finishedAt, flagDecision: t.run.flagDecision },
				segments: (model?.parameters?.segments ?? []) as {
					key: string;
					length: { value: number };
					mass: { value: number };
					comDistance: { value: number };
					inertia: { flexion: { value: number }; abduction: { value: number }; longitudinal: { value: number } };
				}[],
				table: model?.parameters?.table ?? null,
				summary: summaryRows(row?.summary, include),
				summaryScope: summaryScope(edgeZone, include),
				edgeZone: t.run ? edgeZone : null,
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
};
