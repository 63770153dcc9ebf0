// Repetitions (cycles) of a movement: event detection on an angle, time normalisation onto 0–100 %, mean ± SD
// across repetitions and the peaks of each repetition. Pure TypeScript, no I/O.
//
// Conventions
//   - `time` is in seconds and strictly increasing; `values` has the same length; NaN marks a gap.
//   - Cycle k spans events[k] .. events[k + 1]; `points` samples are placed at equal steps of its duration
//     (0 %, 100/(points − 1) %, …, 100 %) and each value is linearly interpolated between the two recorded samples
//     around that time. A gap sample next to the time gives NaN (nothing is invented across a gap).
//   - meanSd uses the sample standard deviation (n − 1); with one cycle the SD is NaN (undefined), with none both
//     are empty.

/** Events that cannot cut a recording into cycles; a RangeError, with a message meant for the reviewer. */
export class CycleError extends RangeError {
	constructor(message: string) {
		super(message);
		this.name = 'CycleError';
	}
}

/** Index i with time[i] ≤ t < time[i + 1] (clamped to 0 .. n − 2); time strictly increasing, n ≥ 2. */
function bracket(time: ArrayLike<number>, t: number): number {
	let lo = 0;
	let hi = time.length - 1;
	while (hi - lo > 1) {
		const mid = (lo + hi) >> 1;
		if (time[mid] <= t) lo = mid;
		else hi = mid;
	}
	return lo;
}

/**
 * The value at time t by linear interpolation between the recorded samples around it (NaN outside the recording or
 * next to a gap). Used by the plots' read-out, always on the full-resolution data.
 */
export function valueAt(time: ArrayLike<number>, values: ArrayLike<number | null>, t: number): number {
	const n = time.length;
	if (n === 0 || !(t >= time[0]) || !(t <= time[n - 1])) return Number.NaN;
	if (n === 1) return values[0] ?? Number.NaN;
	const i = bracket(time, t);
	const a = values[i] ?? Number.NaN;
	const b = values[i + 1] ?? Number.NaN;
	const t0 = time[i];
	const t1 = time[i + 1];
	if (t === t0) return a;
	if (t === t1) return b;
	return a + ((b - a) * (t - t0)) / (t1 - t0);
}

/** Index of the sample nearest to time t (time strictly increasing, at least one sample). */
export function nearestIndex(time: ArrayLike<number>, t: number): number {
	const n = time.length;
	if (n <= 1 || t <= time[0]) return 0;
	if (t >= time[n - 1]) return n - 1;
	const i = bracket(time, t);
	return t - time[i] <= time[i + 1] - t ? i : i + 1;
}

function checkSeries(time: ArrayLike<number>, values: ArrayLike<number>): void {
	if (time.length !== values.length) throw new RangeError(`time has ${time.length} samples but values has ${values.length}.`);
	for (let i = 1; i < time.length; i++)
		if (!(time[i] > time[i - 1])) throw new RangeError(`time must be strictly increasing (time[${i}] ≤ time[${i - 1}]).`);
}

/**
 * Time-normalises the repetitions between consecutive events onto 0..100 % in `points` steps (see the top of the
 * file). Events must be strictly increasing and lie within the recording.
 */
export function normaliseCycles(
	time: Float64Array,
	values: Float64Array,
	events: number[],
	points = 101
): { percent: number[]; cycles: number[][] } {
	checkSeries(time, values);
	if (!Number.isInteger(points) || points < 2) throw new RangeError(`points must be a whole number of at least 2 (got ${points}).`);
	if (time.length < 2) throw new RangeError('A recording needs at least two samples to be cut into cycles.');
	const first = time[0];
	const last = time[time.length - 1];
	for (let k = 0; k < events.length; k++) {
		const e = events[k];
		if (!Number.isFinite(e) || e < first || e > last)
			throw new CycleError(`Event ${k + 1} (${e} s) lies outside the recording (${first} s to ${last} s).`);
		if (k > 0 && !(e > events[k - 1])) throw new CycleError(`Events must be strictly increasing (event ${k + 1} is not after event ${k}).`);
	}
	const percent = Array.from({ length: points }, (_, j) => (100 * j) / (points - 1));
	const cycles: number[][] = [];
	for (let k = 0; k + 1 < events.length; k++) {
		const a = events[k];
		const d = events[k + 1] - a;
		const cycle = new Array<number>(points);
		for (let j = 0; j < points; j++) {
			// the last point is exactly the closing event (no rounding drift past the recording's end)
			const t = j === points - 1 ? events[k + 1] : a + (d * j) / (points - 1);
			cycle[j] = valueAt(time, values, t);
		}
		cycles.push(cycle);
	}
	return { percent, cycles };
}

/** Mean and sample standard deviation (n − 1) across cycles, point by point; NaN values are left out. */
export function meanSd(cycles: number[][]): { mean: number[]; sd: number[] } {
	if (cycles.length === 0) return { mean: [], sd: [] };
	const m = cycles[0].length;
	for (const c of cycles) if (c.length !== m) throw new RangeError('Every cycle must have the same number of points.');
	const mean = new Array<number>(m);
	const sd = new Array<number>(m);
	for (let j = 0; j < m; j++) {
		let n = 0;
		let sum = 0;
		for (const c of cycles) {
			if (Number.isFinite(c[j])) {
				n++;
				sum += c[j];
			}
		}
		const mu = n ? sum / n : Number.NaN;
		let ss = 0;
		for (const c of cycles) if (Number.isFinite(c[j])) ss += (c[j] - mu) ** 2;
		mean[j] = mu;
		sd[j] = n > 1 ? Math.sqrt(ss / (n - 1)) : Number.NaN;
	}
	return { mean, sd };
}

export interface Peak {
	index: number;
	time: number;
	value: number;
	/** Height above the higher of the two lowest points on either side before a higher sample (or the end). */
	prominence: number;
}

/**
 * Local maxima of `values` (a plateau counts once, at its middle sample), each with its prominence; peaks lower in
 * prominence than minProminence are dropped, then, tallest first, any peak closer than minDistanceS to a taller kept
 * one. Returned in time order. For minima, pass the negated values.
 * The local maxima, the plateau rule, the prominence and each rule on its own select the same peaks as
 * scipy.signal.find_peaks / peak_prominences (tests/unit/processing/peaks-scipy.test.ts); with both rules given,
 * prominence is applied first here (find_peaks applies distance first), so a small ripple never hides a real peak.
 */
export function detectPeaks(
	values: ArrayLike<number>,
	time: ArrayLike<number>,
	opts: { minProminence?: number; minDistanceS?: number } = {}
): Peak[] {
	checkSeries(time, values);
	const n = values.length;
	const found: Peak[] = [];
	for (let i = 1; i < n - 1; i++) {
		const y = values[i];
		if (!Number.isFinite(y) || !(y > values[i - 1])) continue;
		// walk across a plateau of equal values
		let j = i;
		while (j + 1 < n && values[j + 1] === y) j++;
		if (j + 1 < n && values[j + 1] < y) {
			const mid = (i + j) >> 1;
			// prominence: on each side, the lowest value before a sample higher than the peak (or the signal's end)
			let leftMin = y;
			for (let k = i - 1; k >= 0 && !(values[k] > y); k--) if (values[k] < leftMin) leftMin = values[k];
			let rightMin = y;
			for (let k = j + 1; k < n && !(values[k] > y); k++) if (values[k] < rightMin) rightMin = values[k];
			found.push({ index: mid, time: time[mid], value: y, prominence: y - Math.max(leftMin, rightMin) });
		}
		i = j;
	}
	let peaks = found.filter((p) => p.prominence >= (opts.minProminence ?? 0));
	const gap = opts.minDistanceS ?? 0;
	if (gap > 0) {
		const kept: Peak[] = [];
		for (const p of [...peaks].sort((a, b) => b.value - a.value || a.index - b.index)) {
			if (kept.every((k) => Math.abs(k.time - p.time) >= gap)) kept.push(p);
		}
		peaks = kept.sort((a, b) => a.index - b.index);
	}
	return peaks;
}

export type CrossingDirection = 'rising' | 'falling' | 'both';

/**
 * Times (s) at which the signal crosses `threshold` in the given direction, by linear interpolation between the two
 * samples on either side. A rising crossing goes from below the threshold to at or above it; falling the reverse.
 */
export function detectCrossings(
	values: ArrayLike<number>,
	time: ArrayLike<number>,
	threshold: number,
	direction: CrossingDirection
): number[] {
	checkSeries(time, values);
	const out: number[] = [];
	for (let i = 1; i < values.length; i++) {
		const a = values[i - 1];
		const b = values[i];
		if (!Number.isFinite(a) || !Number.isFinite(b)) continue;
		const rising = a < threshold && b >= threshold;
		const falling = a > threshold && b <= threshold;
		if ((rising && direction !== 'falling') || (falling && direction !== 'rising')) {
			out.push(time[i - 1] + ((threshold - a) / (b - a)) * (time[i] - time[i - 1]));
		}
	}
	return out;
}

export interface CyclePeaks {
	/** Largest value and where it occurs (% of the cycle). */
	max: number;
	maxAt: number;
	/** Smallest value and where it occurs (% of the cycle). */
	min: number;
	minAt: number;
}

/** The largest and the smallest value of one normalised cycle and the % of the cycle where each occurs (first on ties). */
export function cyclePeaks(percent: number[], cycle: number[]): CyclePeaks {
	let maxI = -1;
	let minI = -1;
	cycle.forEach((y, j) => {
		if (!Number.isFinite(y)) return;
		if (maxI < 0 || y > cycle[maxI]) maxI = j;
		if (minI < 0 || y < cycle[minI]) minI = j;
	});
	if (maxI < 0) return { max: Number.NaN, maxAt: Number.NaN, min: Number.NaN, minAt: Number.NaN };
	return { max: cycle[maxI], maxAt: percent[maxI], min: cycle[minI], minAt: percent[minI] };
}

/** Mean and sample SD (n − 1) of a list of numbers, NaN left out (SD NaN for fewer than two). */
export function meanSdOf(xs: number[]): { mean: number; sd: number; n: number } {
	const f = xs.filter((x) => Number.isFinite(x));
	const n = f.length;
	if (!n) return { mean: Number.NaN, sd: Number.NaN, n };
	const mean = f.reduce((s, x) => s + x, 0) / n;
	const sd = n > 1 ? Math.sqrt(f.reduce((s, x) => s + (x - mean) ** 2, 0) / (n - 1)) : Number.NaN;
	return { mean, sd, n };
}

/** Checks a list of event times against a recording; the messages are the ones shown beside the field. */
export function eventProblems(times: number[], first: number, last: number): string | null {
	if (times.length < 2) return 'Mark at least two events (one cycle runs from one event to the next).';
	for (let k = 0; k < times.length; k++) {
		if (!Number.isFinite(times[k])) return `Event ${k + 1} is not a number of seconds.`;
		if (times[k] < first || times[k] > last) return `Event ${k + 1} (${times[k]} s) lies outside the recording (${first} s to ${last} s).`;
		if (k > 0 && !(times[k] > times[k - 1]))
			return `Event times must be strictly increasing: event ${k + 1} (${times[k]} s) is not after event ${k} (${times[k - 1]} s).`;
	}
	return null;
}
