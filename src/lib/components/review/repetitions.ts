// The repetitions of one run, as the session review shows them: each DOF cut at the events and time-normalised to
// 0–100 %, the mean ± SD of the repetitions kept, each repetition's peaks and the mean ± SD of the kept peaks.
// `leftOut[k]` true leaves repetition k out of the means (it overlaps the run's edge zone); its peaks are still listed.
import { cyclePeaks, meanSd, meanSdOf, normaliseCycles, type CyclePeaks } from '../../processing/cycles';
import type { ReviewCurve } from '../../types/review';
import { displayUnit } from './plot-data';

export interface DofRepetitions {
	c: ReviewCurve;
	/** The unit shown (angles in °) and the factor from the stored unit. */
	du: { unit: string; factor: number };
	percent: number[];
	/** Mean and sample SD (n − 1) of the kept repetitions, point by point. */
	ms: { mean: number[]; sd: number[] };
	/** Every repetition's peaks, in the unit shown. */
	peaks: CyclePeaks[];
}

/** Every DOF of a run (sample times `t`, s) cut at the event `times`. */
export function repetitionsOf(t: number[], curves: ReviewCurve[], times: number[], leftOut: boolean[]): DofRepetitions[] {
	const time = Float64Array.from(t);
	return curves.map((c) => {
		const du = displayUnit(c.unit);
		const v = Float64Array.from(c.v, (x) => (x === null ? Number.NaN : x * du.factor));
		const { percent, cycles } = normaliseCycles(time, v, times);
		return { c, du, percent, ms: meanSd(cycles.filter((_, k) => !leftOut[k])), peaks: cycles.map((cy) => cyclePeaks(percent, cy)) };
	});
}

/** Mean ± SD of the kept repetitions' peaks and of where in the cycle they fall. */
export function peakMeans(peaks: CyclePeaks[], leftOut: boolean[]): Record<keyof CyclePeaks, { mean: number; sd: number; n: number }> {
	const kept = peaks.filter((_, k) => !leftOut[k]);
	const of = (key: keyof CyclePeaks) => meanSdOf(kept.map((p) => p[key]));
	return { max: of('max'), maxAt: of('maxAt'), min: of('min'), minAt: of('minAt') };
}
