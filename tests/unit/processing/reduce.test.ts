// Peak-preserving plot reduction: point cap, the extreme of every bucket kept, time order, gaps, and LTTB itself on a
// tiny example whose triangle areas are hand-computed below.
import { describe, expect, it } from 'vitest';
import { LTTB, LTTBIndexesForBuckets } from 'downsample/methods/LTTB.js';
import { reduceForPlot, type ReducedSeries } from '../../../src/lib/processing/reduce';
// seeded (mulberry32) so the noisy signals are the same on every run
import { seededUniform } from '../../../src/lib/processing/edges';

/** A slow sine plus noise plus rare large spikes (both signs), sampled at 1 kHz. */
function noisySignal(n: number, seed: number): { time: Float64Array; values: Float64Array } {
	const rnd = seededUniform(seed);
	const time = new Float64Array(n);
	const values = new Float64Array(n);
	for (let i = 0; i < n; i++) {
		time[i] = i / 1000;
		let y = 30 * Math.sin(2 * Math.PI * 0.7 * time[i]) + 2 * (rnd() - 0.5);
		const s = rnd();
		if (s < 0.0005) y += 80 * (rnd() + 0.5);
		else if (s < 0.001) y -= 80 * (rnd() + 0.5);
		values[i] = y;
	}
	return { time, values };
}

function expectStrictlyIncreasing(t: number[]): void {
	for (let k = 1; k < t.length; k++)
		if (!(t[k] > t[k - 1])) throw new Error(`time not increasing at output ${k}: ${t[k - 1]} then ${t[k]}`);
}

/** For every bucket, its minimum and maximum finite sample (time and value) are in the output. */
function expectBucketExtremesKept(time: ArrayLike<number>, values: ArrayLike<number>, out: ReducedSeries): void {
	const drawn = new Map<number, number>();
	out.t.forEach((t, k) => {
		if (Number.isFinite(out.v[k])) drawn.set(t, out.v[k]);
	});
	for (const { start, end } of out.buckets) {
		let minI = -1;
		let maxI = -1;
		for (let i = start; i < end; i++) {
			if (!Number.isFinite(values[i])) continue;
			if (minI < 0 || values[i] < values[minI]) minI = i;
			if (maxI < 0 || values[i] > values[maxI]) maxI = i;
		}
		expect(minI).toBeGreaterThanOrEqual(0);
		if (drawn.get(time[minI]) !== values[minI]) throw new Error(`minimum of bucket ${start}..${end} (sample ${minI}) missing`);
		if (drawn.get(time[maxI]) !== values[maxI]) throw new Error(`maximum of bucket ${start}..${end} (sample ${maxI}) missing`);
	}
}

describe('reduceForPlot', () => {
	it.each([1e5, 1e6])('caps %d samples at 2000 points (default) and at 500', (n) => {
		const { time, values } = noisySignal(n, 7);
		const out = reduceForPlot(time, values);
		expect(out.t.length).toBeLessThanOrEqual(2000);
		expect(out.t.length).toBeGreaterThan(1500); // most of the budget is used (≈ 3 per bucket)
		expect(out.v.length).toBe(out.t.length);
		// 2 end buckets + ⌊(2000 − 2)/3⌋ = 666 middle buckets
		expect(out.buckets.length).toBe(668);
		const small = reduceForPlot(time, values, 500);
		expect(small.t.length).toBeLessThanOrEqual(500);
		expect(small.buckets.length).toBe(2 + Math.floor(498 / 3));
	});

	it('downsampling keeps the extreme of every bucket', () => {
		for (const [n, seed, maxPoints] of [
			[1e5, 1, 2000],
			[1e5, 2, 300],
			[250_000, 3, 1000],
			[20_011, 4, 10],
			[1e6, 5, 10] // buckets of ≈ 330,000 samples
		] as const) {
			const { time, values } = noisySignal(n, seed);
			const out = reduceForPlot(time, values, maxPoints);
			expect(out.t.length).toBeLessThanOrEqual(maxPoints);
			expectBucketExtremesKept(time, values, out);
			// the global extremes (the largest spikes) are therefore drawn too
			expect(out.v.reduce((a, b) => Math.max(a, b), -Infinity)).toBe(values.reduce((a, b) => Math.max(a, b), -Infinity));
			expect(out.v.reduce((a, b) => Math.min(a, b), Infinity)).toBe(values.reduce((a, b) => Math.min(a, b), Infinity));
		}
	});

	it("contains every point of the package's own LTTB when the buckets coincide", () => {
		// 2 + 666·150 samples: the package's bucket size (n − 2)/(668 − 2) = 150 exactly, the same cut as ours
		const n = 2 + 666 * 150;
		const { time, values } = noisySignal(n, 21);
		const out = reduceForPlot(time, values, 2000);
		const drawn = new Set(out.t);
		const reference = LTTB(
			Array.from(time, (t, i): [number, number] => [t, values[i]]),
			668
		);
		expect(reference.length).toBe(668);
		for (let k = 0; k < reference.length; k++) expect(drawn.has((reference[k] as [number, number])[0])).toBe(true);
	});

	it('buckets cover the series contiguously, first and last sample on their own', () => {
		const { time, values } = noisySignal(50_000, 5);
		const out = reduceForPlot(time, values, 800);
		expect(out.buckets[0]).toEqual({ start: 0, end: 1 });
		expect(out.buckets[out.buckets.length - 1]).toEqual({ start: 49_999, end: 50_000 });
		for (let k = 1; k < out.buckets.length; k++) expect(out.buckets[k].start).toBe(out.buckets[k - 1].end);
		expect(out.t[0]).toBe(time[0]);
		expect(out.t[out.t.length - 1]).toBe(time[49_999]);
	});

	it('returns points in strictly increasing time', () => {
		const { time, values } = noisySignal(1e5, 9);
		expectStrictlyIncreasing(reduceForPlot(time, values).t);
		// a flat signal: LTTB pick, min and max coincide, deduplicated
		const flat = reduceForPlot(time, new Float64Array(time.length).fill(3));
		expectStrictlyIncreasing(flat.t);
		expect(flat.v.every((y) => y === 3)).toBe(true);
	});

	it('returns short inputs unchanged', () => {
		const time = [0, 0.01, 0.02, 0.03, 0.04];
		const values = [1, Number.NaN, 3, -2, 5];
		const out = reduceForPlot(time, values);
		expect(out.t).toEqual(time);
		expect(out.v).toEqual(values);
		expect(out.buckets).toEqual([]);
		const { time: t2, values: v2 } = noisySignal(2000, 11);
		const exact = reduceForPlot(t2, v2);
		expect(exact.t).toEqual(Array.from(t2));
		expect(exact.v).toEqual(Array.from(v2));
	});

	it('skips NaN samples and keeps one NaN in every gap so a line breaks', () => {
		const { time, values } = noisySignal(1e5, 13);
		const gapsAt = [
			[100, 150],
			[40_000, 40_001],
			[70_000, 72_500]
		];
		for (const [a, b] of gapsAt) for (let i = a; i < b; i++) values[i] = Number.NaN;
		values[0] = Number.NaN; // leading gap: dropped
		values[99_999] = Number.NaN; // trailing gap: dropped
		const out = reduceForPlot(time, values);
		expect(out.t.length).toBeLessThanOrEqual(2000);
		expectStrictlyIncreasing(out.t);
		expectBucketExtremesKept(time, values, out);
		const nanTimes = out.t.filter((_, k) => Number.isNaN(out.v[k]));
		expect(nanTimes).toEqual(gapsAt.map(([a]) => time[a]));
		expect(Number.isNaN(out.v[0])).toBe(false);
		expect(Number.isNaN(out.v[out.v.length - 1])).toBe(false);
	});

	it('stays within the cap when every other sample is missing', () => {
		const { time, values } = noisySignal(30_000, 17);
		for (let i = 1; i < values.length; i += 2) values[i] = Number.NaN;
		const out = reduceForPlot(time, values, 1000);
		expect(out.t.length).toBeLessThanOrEqual(1000);
		expectStrictlyIncreasing(out.t);
		expectBucketExtremesKept(time, values, out);
		// no two finite points without a break between them
		for (let k = 1; k < out.v.length; k++) expect(Number.isNaN(out.v[k]) || Number.isNaN(out.v[k - 1])).toBe(true);
	});

	it('keeps every finite sample when few are left among many missing ones', () => {
		const time = Float64Array.from({ length: 5000 }, (_, i) => i / 100);
		const values = new Float64Array(5000).fill(Number.NaN);
		expect(reduceForPlot(time, values)).toEqual({ t: [], v: [], buckets: [] });
		values[10] = 1;
		values[11] = 2;
		values[3000] = -1;
		const out = reduceForPlot(time, values);
		expect(out.t).toEqual([time[10], time[11], time[12], time[3000]]);
		expect(out.v).toEqual([1, 2, Number.NaN, -1]);
		expect(out.buckets).toEqual([]);
	});

	it('rejects bad arguments', () => {
		expect(() => reduceForPlot([0, 1], [1])).toThrow(/samples/);
		expect(() => reduceForPlot([0, 1], [1, 2], 5)).toThrow(/maxPoints/);
		expect(() => reduceForPlot([0, 0], [1, 2])).toThrow(/strictly increasing/);
	});
});

describe('LTTB (downsample package) on a tiny example', () => {
	// Points (0,0) (1,1) (2,3) (3,2) (4,0) (5,1); buckets [A] [(1,1),(2,3)] [(3,2),(4,0)] [(5,1)].
	// Hand-computed: area(A,P,C) = |(Ax−Cx)(Py−Ay) − (Ax−Px)(Cy−Ay)| / 2.
	//  Bucket 1: A = (0,0), C = mean of bucket 2 = (3.5, 1).
	//    P = (1,1): |(−3.5)(1) − (−1)(1)| / 2 = |−2.5| / 2 = 1.25
	//    P = (2,3): |(−3.5)(3) − (−2)(1)| / 2 = |−8.5| / 2 = 4.25  → picks (2,3), index 2
	//  Bucket 2: A = (2,3), C = mean of bucket 3 = (5, 1).
	//    P = (3,2): |(−3)(−1) − (−1)(−2)| / 2 = |1| / 2 = 0.5
	//    P = (4,0): |(−3)(−3) − (−2)(−2)| / 2 = |5| / 2 = 2.5   → picks (4,0), index 4
	//  First and last points are always kept → indices [0, 2, 4, 5].
	const pts = [0, 1, 3, 2, 0, 1].map((y, x): [number, number] => [x, y]);

	it('picks the largest triangle in each bucket (hand-computed)', () => {
		expect(LTTBIndexesForBuckets([[pts[0]], [pts[1], pts[2]], [pts[3], pts[4]], [pts[5]]])).toEqual([0, 2, 4, 5]);
		// the package's own bucketing of 6 points into 4 gives the same buckets
		expect(Array.from(LTTB(pts, 4))).toEqual([pts[0], pts[2], pts[4], pts[5]]);
	});
});

// the series API's reduction (GET …/runs/[rid]/series?points=…), which is reduceForPlot
describe('reduceForPlot as the series API uses it', () => {
	const n = 10_001;
	const time = Float64Array.from({ length: n }, (_, i) => i / 1000);
	const values = Float64Array.from(time, (t) => Math.sin(2 * Math.PI * 3 * t) + (t === 4.321 ? 5 : 0));
	values[7777] = -9;
	it('returns at most the asked number of points', () => {
		const r = reduceForPlot(time, values, 200);
		expect(r.t.length).toBeLessThanOrEqual(200);
		expect(r.v.length).toBe(r.t.length);
	});
	it('keeps the global extremes and their times', () => {
		const r = reduceForPlot(time, values, 100);
		const max = Math.max(...values);
		const min = Math.min(...values);
		expect(Math.max(...r.v)).toBe(max);
		expect(Math.min(...r.v)).toBe(min);
		expect(r.t[r.v.indexOf(min)]).toBe(time[7777]);
	});
	it('keeps times increasing', () => {
		const r = reduceForPlot(time, values, 300);
		for (let i = 1; i < r.t.length; i++) expect(r.t[i]).toBeGreaterThan(r.t[i - 1]);
	});
	it('returns everything when fewer samples than points', () => {
		expect(reduceForPlot(new Float64Array([0, 1]), new Float64Array([5, 6]), 10)).toMatchObject({ t: [0, 1], v: [5, 6] });
	});
	it('keeps a gap of NaN visible', () => {
		const v = new Float64Array(100).fill(NaN);
		const r = reduceForPlot(
			Float64Array.from({ length: 100 }, (_, i) => i),
			v,
			10
		);
		expect(r.v.every(Number.isNaN)).toBe(true);
		// a gap inside a curve: one NaN point between finite ones, so the drawn line breaks there
		const w = Float64Array.from({ length: 1000 }, (_, i) => (i >= 400 && i < 450 ? NaN : Math.sin(i / 50)));
		const g = reduceForPlot(
			Float64Array.from({ length: 1000 }, (_, i) => i),
			w,
			50
		);
		const k = g.v.findIndex(Number.isNaN);
		expect(k).toBeGreaterThan(0);
		expect(g.t[k]).toBe(400);
		expect(Number.isFinite(g.v[k - 1]) && Number.isFinite(g.v[k + 1])).toBe(true);
	});
});
