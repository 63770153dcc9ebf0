// Peak-preserving reduction of long series for drawing: Largest-Triangle-Three-Buckets (the `downsample` package)
// plus the minimum and the maximum of every bucket, so a spike never disappears from a plot.
//
// Pure TypeScript, no I/O. Used by the review plots; the numbers drawn are the recorded samples themselves (a
// subset of them), never averages.
//
// How the data are cut into buckets
//   1. Only finite samples take part (NaN / ±Infinity values are gaps). Let F be their number.
//   2. Like LTTB itself, the first and the last finite sample form one-sample buckets of their own; the F − 2
//      samples between them are cut into m contiguous buckets by count: middle bucket i (0-based) holds the finite
//      samples with rank 1 + floor(i·(F−2)/m) … 1 + floor((i+1)·(F−2)/m) − 1. B = m + 2 buckets in all.
//   3. From every middle bucket the output takes LTTB's pick, the bucket's minimum and its maximum (first
//      occurrence on ties), in time order and deduplicated: at most 3 points per middle bucket, so the output has
//      at most 2 + 3m points.
//
// Gaps
//   Where one or more non-finite samples lie between two kept samples, one NaN point is written between them
//   (at the time of the first non-finite sample of that stretch), so a line drawn through the output breaks there.
//   Leading and trailing non-finite samples are dropped. To keep the total within maxPoints, the budget for kept
//   samples is M = max(⌊(N+1)/2⌋, N − G), G = number of interior gaps: the gap points are at most min(G, M − 1)
//   (one per interval between kept samples at most), so M + min(G, M − 1) ≤ N. Then m = ⌊(M − 2)/3⌋.
//
// Inputs of at most maxPoints samples are returned unchanged (copied, NaN included), with no buckets.

import { LTTBIndexesForBuckets } from 'downsample/methods/LTTB.js';

/** Default number of points drawn for one series. */
export const DEFAULT_PLOT_POINTS = 2000;
/** Smallest maxPoints accepted: leaves at least one middle bucket even when half the budget goes to gap points. */
export const MIN_PLOT_POINTS = 10;

/**
 * LTTB's pick (a rank into the concatenated buckets) for every bucket; every bucket must be non-empty.
 * The package's LTTBIndexesForBuckets averages the next bucket by spreading it into a call's arguments, which
 * overflows the stack for buckets of some 10⁵ samples; so it is called one bucket at a time with
 * [previous pick] [bucket] [mean of the next bucket] — the same three-bucket step, same triangle areas.
 */
function lttbPicks(buckets: [number, number][][]): number[] {
	const picks = [0];
	let offset = 1;
	let previous = buckets[0][0];
	for (let b = 1; b < buckets.length - 1; b++) {
		const bucket = buckets[b];
		const next = buckets[b + 1];
		let mx = 0;
		let my = 0;
		for (const [x, y] of next) {
			mx += x;
			my += y;
		}
		const j = LTTBIndexesForBuckets([[previous], bucket, [[mx / next.length, my / next.length]]])[1] - 1;
		picks.push(offset + j);
		previous = bucket[j];
		offset += bucket.length;
	}
	picks.push(offset);
	return picks;
}

export interface PlotBucket {
	/** Index (into the input arrays) of the bucket's first sample. */
	start: number;
	/** Index one past the bucket's last sample (exclusive). */
	end: number;
}

export interface ReducedSeries {
	t: number[];
	v: number[];
	/** The buckets used (first and last are the one-sample end buckets); empty when nothing was reduced. */
	buckets: PlotBucket[];
}

/**
 * Reduces (time, values) to at most maxPoints points for drawing, keeping the LTTB pick, the minimum and the
 * maximum of every bucket (see the comment at the top of this file). `time` must be strictly increasing.
 */
export function reduceForPlot(time: ArrayLike<number>, values: ArrayLike<number>, maxPoints = DEFAULT_PLOT_POINTS): ReducedSeries {
	const n = time.length;
	if (values.length !== n) throw new RangeError(`time has ${n} samples but values has ${values.length}.`);
	if (!Number.isInteger(maxPoints) || maxPoints < MIN_PLOT_POINTS) {
		throw new RangeError(`maxPoints must be a whole number of at least ${MIN_PLOT_POINTS} (got ${maxPoints}).`);
	}
	for (let i = 0; i < n; i++) {
		if (!Number.isFinite(time[i])) throw new RangeError(`time[${i}] is not a finite number.`);
		if (i > 0 && !(time[i] > time[i - 1])) throw new RangeError(`time must be strictly increasing (time[${i}] ≤ time[${i - 1}]).`);
	}
	if (n <= maxPoints) return { t: Array.from(time), v: Array.from(values), buckets: [] };

	// Finite samples (their input indices, in order) and the interior gaps between them.
	const finite: number[] = [];
	let gaps = 0;
	for (let i = 0; i < n; i++) {
		if (Number.isFinite(values[i])) {
			if (finite.length > 0 && finite[finite.length - 1] !== i - 1) gaps++;
			finite.push(i);
		}
	}
	const F = finite.length;
	const budget = Math.max(Math.floor((maxPoints + 1) / 2), maxPoints - gaps);

	let kept: number[]; // input indices, increasing
	const buckets: PlotBucket[] = [];
	if (F <= budget) {
		kept = finite;
	} else {
		const m = Math.floor((budget - 2) / 3);
		const inner = F - 2;
		// Ranks (into `finite`) bounding each bucket: [lo, hi).
		const bounds: [number, number][] = [[0, 1]];
		for (let i = 0; i < m; i++) bounds.push([1 + Math.floor((i * inner) / m), 1 + Math.floor(((i + 1) * inner) / m)]);
		bounds.push([F - 1, F]);

		const normalised = bounds.map(([lo, hi]) => {
			const bucket: [number, number][] = new Array(hi - lo);
			for (let r = lo; r < hi; r++) bucket[r - lo] = [time[finite[r]], values[finite[r]]];
			return bucket;
		});
		const picks = lttbPicks(normalised);

		kept = [];
		for (let b = 0; b < bounds.length; b++) {
			const [lo, hi] = bounds[b];
			buckets.push({ start: finite[lo], end: finite[hi - 1] + 1 });
			let minR = lo;
			let maxR = lo;
			for (let r = lo + 1; r < hi; r++) {
				const y = values[finite[r]];
				if (y < values[finite[minR]]) minR = r;
				if (y > values[finite[maxR]]) maxR = r;
			}
			const ranks = [...new Set([picks[b], minR, maxR])].sort((a, c) => a - c);
			for (const r of ranks) kept.push(finite[r]);
		}
	}

	const t: number[] = [];
	const v: number[] = [];
	for (let k = 0; k < kept.length; k++) {
		const i = kept[k];
		if (k > 0) {
			const prev = kept[k - 1];
			// Any non-finite sample strictly between prev and i? The finite ones between them are contiguous ranks.
			if (i - prev > 1) {
				for (let j = prev + 1; j < i; j++) {
					if (!Number.isFinite(values[j])) {
						t.push(time[j]);
						v.push(Number.NaN);
						break;
					}
				}
			}
		}
		t.push(time[i]);
		v.push(values[i]);
	}
	return { t, v, buckets };
}
