// The stored shape of a gait run's results (run_gait) made from the pure results: no I/O, so the run's computation
// thread builds it (runs/compute.ts); runs/gait-results.ts writes and reads it.
import { CYCLE_EXCLUSION_TEXT, type GaitCycle, type GaitEvent, type Spatiotemporal, type Stat } from '../../processing/gait';
import type { ContactView, FootSpatiotemporalView, GaitCycleView, GaitEventView, StatView } from '../../types/gait';

import type { StoredForces } from '../db/gait-json';
export type { StoredForces } from '../db/gait-json';

/** The gait results the worker stores for a run (run_gait), numbers rounded, NaN as null. */
export interface StoredGait {
	forces: StoredForces;
	contacts: ContactView[];
	events: GaitEventView[];
	cycles: GaitCycleView[];
	spatiotemporal: { left: FootSpatiotemporalView; right: FootSpatiotemporalView; lengthBasis: 'heel' | 'pelvis' | null };
}

/** A number to 6 significant digits as stored and answered; null for NaN or ±∞ (JSON has neither). */
export const r6 = (x: number): number | null => (Number.isFinite(x) ? Number(x.toPrecision(6)) : null);
const stat = (s: Stat): StatView => ({ mean: r6(s.mean), sd: r6(s.sd), n: s.n });

/** The stored shape of a run's gait results, from the pure results (JSON-safe: no NaN). */
export function storedGait(
	forces: StoredForces,
	/** The contacts as found and assigned; their times are read off `time`. */
	contacts: readonly Omit<ContactView, 'startTime' | 'endTime'>[],
	time: ArrayLike<number>,
	events: readonly GaitEvent[],
	cycles: readonly GaitCycle[],
	st: Spatiotemporal
): StoredGait {
	const foot = (f: 'left' | 'right'): FootSpatiotemporalView => {
		const s = st[f];
		return {
			foot: f,
			cycles: s.n,
			cadence: stat(s.cadence),
			cycleTimeS: stat(s.cycleTimeS),
			stanceTimeS: stat(s.stanceTimeS),
			swingTimeS: stat(s.swingTimeS),
			stancePercent: stat(s.stancePercent),
			swingPercent: stat(s.swingPercent),
			doubleSupportS: stat(s.doubleSupportS),
			doubleSupportPercent: stat(s.doubleSupportPercent),
			stepLengthM: stat(s.stepLengthM),
			strideLengthM: stat(s.strideLengthM),
			speedMS: stat(s.speedMS)
		};
	};
	return {
		forces,
		contacts: contacts.map((c) => ({
			id: c.id,
			plate: c.plate,
			start: c.start,
			end: c.end,
			startTime: r6(time[c.start]) ?? 0,
			endTime: r6(time[c.end]) ?? 0,
			foot: c.foot,
			assignedBy: c.assignedBy,
			shared: c.shared,
			offPlate: c.offPlate,
			clipped: c.clipped,
			used: c.used,
			reason: c.reason
		})),
		events: events.map((e) => ({ foot: e.foot, kind: e.kind, time: r6(e.time) ?? 0, sample: e.sample, source: e.source })),
		cycles: cycles.map((c) => ({
			foot: c.foot,
			start: r6(c.start) ?? 0,
			end: r6(c.end) ?? 0,
			startSample: c.startSample,
			endSample: c.endSample,
			off: r6(c.off),
			offSample: Number.isFinite(c.offSample) ? c.offSample : null,
			cycleTimeS: r6(c.cycleTimeS) ?? 0,
			stanceTimeS: r6(c.stanceTimeS),
			swingTimeS: r6(c.swingTimeS),
			stancePercent: r6(c.stancePercent),
			swingPercent: r6(c.swingPercent),
			sources: c.sources,
			excluded: c.excluded,
			excludedText: c.excluded ? CYCLE_EXCLUSION_TEXT[c.excluded] : null
		})),
		spatiotemporal: { left: foot('left'), right: foot('right'), lengthBasis: st.lengthBasis }
	};
}
