// Cycles: time normalisation and mean ± SD against hand-computed examples, peak and crossing detection against the
// closed form of a sampled sine, and the errors for bad events.
import { describe, expect, it } from 'vitest';
import {
	CycleError,
	cyclePeaks,
	detectCrossings,
	detectPeaks,
	eventProblems,
	meanSd,
	meanSdOf,
	nearestIndex,
	normaliseCycles,
	valueAt
} from '../../../src/lib/processing/cycles';

const t5 = Float64Array.from([0, 0.1, 0.2, 0.3, 0.4]);
const v5 = Float64Array.from([0, 2, 6, 4, 8]);

function expectClose(actual: number[], expected: number[], digits = 12): void {
	expect(actual.length).toBe(expected.length);
	actual.forEach((a, k) => expect(a).toBeCloseTo(expected[k], digits));
}

function thrown(fn: () => unknown): CycleError {
	try {
		fn();
	} catch (e) {
		expect(e).toBeInstanceOf(CycleError);
		return e as CycleError;
	}
	throw new Error('expected a CycleError');
}

describe('normaliseCycles', () => {
	it('takes the samples themselves when the instants fall on them (hand-computed)', () => {
		// events [0, 0.4], 5 points → instants 0, 0.1, 0.2, 0.3, 0.4 s = the samples → 0, 2, 6, 4, 8
		const { percent, cycles } = normaliseCycles(t5, v5, [0, 0.4], 5);
		expect(percent).toEqual([0, 25, 50, 75, 100]);
		expect(cycles.length).toBe(1);
		expectClose(cycles[0], [0, 2, 6, 4, 8]);
	});

	it('interpolates linearly between samples (hand-computed)', () => {
		// events [0.05, 0.35], 4 points → instants 0.05, 0.15, 0.25, 0.35 s, each half-way between two samples:
		// (0+2)/2 = 1, (2+6)/2 = 4, (6+4)/2 = 5, (4+8)/2 = 6
		const one = normaliseCycles(t5, v5, [0.05, 0.35], 4);
		expectClose(one.percent, [0, 100 / 3, 200 / 3, 100]);
		expectClose(one.cycles[0], [1, 4, 5, 6]);
		// events [0.05, 0.15, 0.4], 3 points:
		//   cycle 1 instants 0.05, 0.10, 0.15 s → 1, 2, 4
		//   cycle 2 instants 0.15, 0.275, 0.4 s → 4; 0.275 is 3/4 of the way from 0.2 (6) to 0.3 (4): 6 − 0.75·2 = 4.5; 8
		const two = normaliseCycles(t5, v5, [0.05, 0.15, 0.4], 3);
		expect(two.percent).toEqual([0, 50, 100]);
		expect(two.cycles.length).toBe(2);
		expectClose(two.cycles[0], [1, 2, 4]);
		expectClose(two.cycles[1], [4, 4.5, 8]);
	});

	it('gives 101 points from 0 to 100 % by default, ending on the next event', () => {
		const time = Float64Array.from({ length: 201 }, (_, i) => i / 100);
		const values = Float64Array.from(time, (t) => 3 * t - 1); // linear: interpolation is exact
		const { percent, cycles } = normaliseCycles(time, values, [0.13, 0.87, 1.5]);
		expect(percent.length).toBe(101);
		expect(percent[0]).toBe(0);
		expect(percent[50]).toBe(50);
		expect(percent[100]).toBe(100);
		cycles[0].forEach((y, j) => expect(y).toBeCloseTo(3 * (0.13 + (0.74 * j) / 100) - 1, 12));
		expect(cycles[1][0]).toBeCloseTo(3 * 0.87 - 1, 12);
		expect(cycles[1][100]).toBeCloseTo(3 * 1.5 - 1, 12);
	});

	it('refuses bad events with a clear message', () => {
		let e = thrown(() => normaliseCycles(t5, v5, [0.2, 0.1]));
		expect(e).toBeInstanceOf(RangeError);
		expect(e.message).toBe('Events must be strictly increasing (event 2 is not after event 1).');
		expect(thrown(() => normaliseCycles(t5, v5, [0.1, 0.1])).message).toMatch(/strictly increasing/);
		e = thrown(() => normaliseCycles(t5, v5, [-0.1, 0.2]));
		expect(e.message).toBe('Event 1 (-0.1 s) lies outside the recording (0 s to 0.4 s).');
		expect(thrown(() => normaliseCycles(t5, v5, [0.1, 0.5])).message).toMatch(/Event 2 \(0.5 s\) lies outside/);
		expect(thrown(() => normaliseCycles(t5, v5, [0.1, Number.NaN])).message).toMatch(/Event 2/);
		expect(() => normaliseCycles(t5, v5, [0, 0.4], 1)).toThrow(RangeError);
		expect(() => normaliseCycles(t5, v5.subarray(1), [0, 0.3])).toThrow(RangeError);
		// one event is no cycle
		expect(normaliseCycles(t5, v5, [0.1]).cycles).toEqual([]);
	});

	it('explains unusable event lists for the form (eventProblems)', () => {
		expect(eventProblems([0.1, 0.3], 0, 0.4)).toBeNull();
		expect(eventProblems([0.1], 0, 0.4)).toMatch(/at least two events/);
		expect(eventProblems([0.3, 0.2], 0, 0.4)).toMatch(/strictly increasing: event 2 \(0.2 s\) is not after event 1 \(0.3 s\)/);
		expect(eventProblems([0.1, 0.5], 0, 0.4)).toMatch(/Event 2 \(0.5 s\) lies outside the recording \(0 s to 0.4 s\)/);
		expect(eventProblems([Number.NaN, 0.2], 0, 0.4)).toMatch(/Event 1 is not a number/);
	});
});

describe('valueAt and nearestIndex', () => {
	it('interpolate and pick the nearest sample (hand-computed)', () => {
		expect(valueAt(t5, v5, 0.25)).toBeCloseTo(5, 12); // half-way between 6 and 4
		expect(valueAt(t5, v5, 0.4)).toBe(8);
		expect(valueAt(t5, v5, 0.41)).toBeNaN();
		expect(valueAt(t5, [0, null, 6, 4, 8], 0.05)).toBeNaN(); // next to a gap
		expect(nearestIndex(t5, 0.26)).toBe(3);
		expect(nearestIndex(t5, 0.24)).toBe(2);
		expect(nearestIndex(t5, -1)).toBe(0);
		expect(nearestIndex(t5, 9)).toBe(4);
	});
});

describe('meanSd', () => {
	it('averages across cycles with the sample SD (hand-computed)', () => {
		// columns (1,3), (2,4), (3,5): mean 2, 3, 4; SD √(((−1)² + 1²)/(2 − 1)) = √2
		const { mean, sd } = meanSd([
			[1, 2, 3],
			[3, 4, 5]
		]);
		expect(mean).toEqual([2, 3, 4]);
		expectClose(sd, [Math.SQRT2, Math.SQRT2, Math.SQRT2]);
		// 1, 2, 3, 4: mean 2.5, SD √((2.25 + 0.25 + 0.25 + 2.25)/3) = √(5/3)
		const four = meanSd([[1], [2], [3], [4]]);
		expect(four.mean).toEqual([2.5]);
		expect(four.sd[0]).toBeCloseTo(Math.sqrt(5 / 3), 12);
	});

	it('gives SD NaN for a single cycle, skips NaN and refuses mismatched cycles', () => {
		const { mean, sd } = meanSd([[1, 2]]);
		expect(mean).toEqual([1, 2]);
		expect(sd.every(Number.isNaN)).toBe(true);
		expect(meanSd([])).toEqual({ mean: [], sd: [] });
		expect(() => meanSd([[1, 2], [3]])).toThrow(/same number of points/);
		// NaN points are left out: column (1, NaN, 3) → mean 2, SD √2
		const gap = meanSd([[1], [Number.NaN], [3]]);
		expect(gap.mean).toEqual([2]);
		expect(gap.sd[0]).toBeCloseTo(Math.SQRT2, 12);
	});
});

const times = (peaks: { time: number }[]): number[] => peaks.map((p) => p.time);

describe('detectPeaks', () => {
	it('finds the peaks of a sampled sine at t = 1/(4f) + k/f (closed form)', () => {
		// f = 1 Hz at 100 Hz: every peak falls on a sample (0.25, 1.25, …), value sin(π/2) = 1
		const time = Float64Array.from({ length: 501 }, (_, i) => i / 100);
		const values = Float64Array.from(time, (t) => Math.sin(2 * Math.PI * t));
		const found = detectPeaks(values, time);
		expectClose(times(found), [0.25, 1.25, 2.25, 3.25, 4.25]);
		found.forEach((p) => expect(p.value).toBeCloseTo(1, 12));
		// f = 1.3 Hz over 4 s: peaks between samples, so the highest sample lies within half a sample period (0.005 s)
		const f = 1.3;
		const t4 = Float64Array.from({ length: 401 }, (_, i) => i / 100);
		const peaks = times(
			detectPeaks(
				Float64Array.from(t4, (t) => Math.sin(2 * Math.PI * f * t)),
				t4
			)
		);
		const expected = [0, 1, 2, 3, 4].map((k) => 1 / (4 * f) + k / f); // 0.192, 0.962, 1.731, 2.500, 3.269 s
		expect(peaks.length).toBe(expected.length);
		peaks.forEach((p, k) => expect(Math.abs(p - expected[k])).toBeLessThanOrEqual(0.005 + 1e-12));
	});

	it('measures and filters by prominence (hand-computed)', () => {
		// values 0, 3, 1, 2, 0.5, 4, 0 at t = 0 … 6 s: local maxima at 1 s (3), 3 s (2), 5 s (4).
		//   3 s: left until 3 (at 1 s), lowest 1; right until 4 (at 5 s), lowest 0.5 → 2 − max(1, 0.5) = 1
		//   1 s: left to the start, lowest 0; right until 4, lowest 0.5 → 3 − max(0, 0.5) = 2.5
		//   5 s: nothing higher either side, lowest 0 and 0 → 4 − 0 = 4
		const time = [0, 1, 2, 3, 4, 5, 6];
		const values = [0, 3, 1, 2, 0.5, 4, 0];
		const all = detectPeaks(values, time);
		expect(times(all)).toEqual([1, 3, 5]);
		expect(all.map((p) => p.prominence)).toEqual([2.5, 1, 4]);
		expect(times(detectPeaks(values, time, { minProminence: 1 }))).toEqual([1, 3, 5]);
		expect(times(detectPeaks(values, time, { minProminence: 1.01 }))).toEqual([1, 5]);
		expect(times(detectPeaks(values, time, { minProminence: 2.5 }))).toEqual([1, 5]);
		expect(times(detectPeaks(values, time, { minProminence: 2.6 }))).toEqual([5]);
	});

	it('keeps the higher of two close peaks (hand-computed)', () => {
		const time = [0, 1, 2, 3, 4, 5, 6];
		const values = [0, 3, 1, 2, 0.5, 4, 0];
		// 4 at 5 s first; 3 at 1 s is 4 s away (kept at 2.5 s, dropped at 4.5 s); 2 at 3 s is 2 s from 5 s (dropped)
		expect(times(detectPeaks(values, time, { minDistanceS: 2.5 }))).toEqual([1, 5]);
		expect(times(detectPeaks(values, time, { minDistanceS: 4.5 }))).toEqual([5]);
		expect(times(detectPeaks(values, time, { minDistanceS: 2 }))).toEqual([1, 3, 5]);
	});

	it('reports a plateau once (its middle sample) and never the ends or samples next to gaps', () => {
		const time = [0, 1, 2, 3, 4, 5, 6];
		expect(times(detectPeaks([0, 1, 2, 2, 2, 1, 0], time))).toEqual([3]);
		expect(times(detectPeaks([0, 2, 2, 3, 1, 1, 1], time))).toEqual([3]); // the 2-plateau rises again: no peak
		expect(times(detectPeaks([5, 1, 2, 1, 0, 1, 6], time))).toEqual([2]);
		expect(detectPeaks([0, 1, Number.NaN, 1, 0, 0, 0], time)).toEqual([]);
		expect(detectPeaks([], [])).toEqual([]);
	});

	it('drops small ripples on a sine with a prominence threshold', () => {
		// sine 1 Hz, amplitude 1, plus a 10 Hz ripple of amplitude 0.05: where the sine's slope 2π·cos(2πt) is below
		// the ripple's 2π·0.5, the ripple makes extra local maxima, of prominence < 2·0.05 + 0.1 (sine change in 0.1 s)
		const time = Float64Array.from({ length: 1001 }, (_, i) => i / 200);
		const values = Float64Array.from(time, (t) => Math.sin(2 * Math.PI * t) + 0.05 * Math.sin(2 * Math.PI * 10 * t));
		expect(detectPeaks(values, time).length).toBeGreaterThan(5);
		const peaks = times(detectPeaks(values, time, { minProminence: 0.5 }));
		expect(peaks.length).toBe(5);
		peaks.forEach((p, k) => expect(Math.abs(p - (0.25 + k))).toBeLessThanOrEqual(0.025));
	});
});

describe('detectCrossings', () => {
	const f = 1.3;
	const time = Float64Array.from({ length: 401 }, (_, i) => i / 100);
	const values = Float64Array.from(time, (t) => Math.sin(2 * Math.PI * f * t));

	it('finds zero crossings of a sampled sine at k/f (rising) and 1/(2f) + k/f (falling) (closed form)', () => {
		const up = detectCrossings(values, time, 0, 'rising');
		const down = detectCrossings(values, time, 0, 'falling');
		// near a zero crossing the sine is almost straight (y'' = 0 there): time error ≲ (dt²/8)·|y''| / |y'| with
		// |y''| ≤ ω²·sin(ω·dt) ≈ ω³·dt, ω = 2πf → (1e-4/8)·ω²·dt ≈ 8e-6 s; 1e-5 s tolerance
		const eUp = [1, 2, 3, 4, 5].map((k) => k / f);
		const eDown = [0, 1, 2, 3, 4].map((k) => 1 / (2 * f) + k / f);
		expect(up.length).toBe(eUp.length);
		expect(down.length).toBe(eDown.length);
		up.forEach((c, k) => expect(Math.abs(c - eUp[k])).toBeLessThan(1e-5));
		down.forEach((c, k) => expect(Math.abs(c - eDown[k])).toBeLessThan(1e-5));
		expectClose(
			detectCrossings(values, time, 0, 'both'),
			[...up, ...down].sort((a, b) => a - b),
			12
		);
	});

	it('finds crossings of 0.5 at asin(0.5)/(2πf) + k/f (closed form)', () => {
		// rising: 1/(12 f) + k/f; falling: 5/(12 f) + k/f. Interpolation error in time ≲ (dt²/8)·max|y''| / |y'| =
		// (1e-4/8)·(2πf)² / (2πf·cos 30°) ≈ 1.2e-4 s, so 2e-4 s tolerance (dt = 0.01 s).
		const up = detectCrossings(values, time, 0.5, 'rising');
		const down = detectCrossings(values, time, 0.5, 'falling');
		const eUp = [0, 1, 2, 3, 4, 5].map((k) => 1 / (12 * f) + k / f); // 0.064 … 3.910 s
		const eDown = [0, 1, 2, 3, 4].map((k) => 5 / (12 * f) + k / f);
		expect(up.length).toBe(eUp.length);
		expect(down.length).toBe(eDown.length);
		up.forEach((c, k) => expect(Math.abs(c - eUp[k])).toBeLessThan(2e-4));
		down.forEach((c, k) => expect(Math.abs(c - eDown[k])).toBeLessThan(2e-4));
	});

	it('interpolates linearly between samples (hand-computed)', () => {
		expect(detectCrossings([0, 2], [0, 1], 0.5, 'rising')).toEqual([0.25]); // 0.5/2 of the way
		expect(detectCrossings([4, 0], [1, 3], 1, 'falling')).toEqual([2.5]); // (1 − 4)/(0 − 4) = 3/4 of 2 s after 1 s
		expect(detectCrossings([-1, 0, 1], [0, 1, 2], 0, 'rising')).toEqual([1]); // reaching the threshold counts once
		expect(detectCrossings([-1, 0, 1], [0, 1, 2], 0, 'falling')).toEqual([]);
		expect(detectCrossings([-1, Number.NaN, 1], [0, 1, 2], 0, 'rising')).toEqual([]);
	});
});

describe('cyclePeaks', () => {
	it('takes the positive and negative peak of every cycle; mean ± SD across cycles (hand-computed)', () => {
		const percent = [0, 50, 100];
		const peaks = [
			[1, 5, -2],
			[0, 3, 4]
		].map((c) => cyclePeaks(percent, c));
		expect(peaks).toEqual([
			{ max: 5, maxAt: 50, min: -2, minAt: 100 },
			{ max: 4, maxAt: 100, min: 0, minAt: 0 }
		]);
		// positive: values 5, 4 → mean 4.5, SD √(0.25 + 0.25) = √0.5; % 50, 100 → mean 75, SD √(625 + 625) = √1250
		const pos = meanSdOf(peaks.map((p) => p.max));
		expect(pos.mean).toBe(4.5);
		expect(pos.sd).toBeCloseTo(Math.sqrt(0.5), 12);
		const posAt = meanSdOf(peaks.map((p) => p.maxAt));
		expect(posAt.mean).toBe(75);
		expect(posAt.sd).toBeCloseTo(Math.sqrt(1250), 12);
		// negative: values −2, 0 → mean −1, SD √2; % 100, 0 → mean 50, SD √5000
		const neg = meanSdOf(peaks.map((p) => p.min));
		expect(neg.mean).toBe(-1);
		expect(neg.sd).toBeCloseTo(Math.SQRT2, 12);
		const negAt = meanSdOf(peaks.map((p) => p.minAt));
		expect(negAt.mean).toBe(50);
		expect(negAt.sd).toBeCloseTo(Math.sqrt(5000), 12);
	});

	it('ignores NaN points, gives NaN for an empty cycle and SD NaN for one value', () => {
		expect(cyclePeaks([0, 50, 100], [Number.NaN, 2, 1])).toEqual({ max: 2, maxAt: 50, min: 1, minAt: 100 });
		const none = cyclePeaks([0, 100], [Number.NaN, Number.NaN]);
		expect(none.max).toBeNaN();
		expect(none.minAt).toBeNaN();
		const one = meanSdOf([3, Number.NaN]);
		expect(one).toEqual({ mean: 3, sd: Number.NaN, n: 1 });
	});
});
