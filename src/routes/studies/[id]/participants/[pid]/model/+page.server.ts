// A participant's scaled segment model: parameters, drawing and the comparison of tables (research data only).
import {
	scaleLimbs,
	compareTables,
	ScalingError,
	SEGMENT_TABLES,
	SEGMENT_TABLE_IDS,
	LIMBS,
	type Limb,
	type SegmentTableId,
	type ParticipantBody
} from '$lib/anthropometry';
import { callerOf, edge } from '$lib/server/http/edge';
import { segmentModelInput } from '$lib/server/participants/records';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const input = await edge(event, () => segmentModelInput(...callerOf(event), event.params.id, event.params.pid));
	const asked = event.url.searchParams.get('table');
	const table: SegmentTableId = SEGMENT_TABLE_IDS.includes(asked as SegmentTableId) ? (asked as SegmentTableId) : input.study.defaultTable;
	const askedLimbs = [...event.url.searchParams.getAll('limb'), ...(event.url.searchParams.get('limbs') ?? '').split(',')].filter(
		(l): l is Limb => (LIMBS as readonly string[]).includes(l)
	);
	const limbs: Limb[] = askedLimbs.length ? [...new Set(askedLimbs)] : [...LIMBS];
	const rule = event.url.searchParams.get('notReportedAs');
	const body: ParticipantBody = {
		sex: input.participant.sex as ParticipantBody['sex'],
		bodyMass: input.participant.bodyMassKg,
		stature: input.participant.statureM,
		measuredLengths: input.measured,
		notReportedAs: rule === 'female' || rule === 'male' || rule === 'mean' ? rule : undefined
	};
	const tables = SEGMENT_TABLE_IDS.map((id) => ({ id, title: SEGMENT_TABLES[id].title }));
	try {
		return {
			...input,
			table,
			limbs,
			tables,
			scaled: scaleLimbs(body, table, limbs),
			comparison: compareTables(body, limbs),
			problem: null
		};
	} catch (err) {
		if (err instanceof ScalingError) return { ...input, table, limbs, tables, scaled: null, comparison: null, problem: err.problems };
		throw err;
	}
};
