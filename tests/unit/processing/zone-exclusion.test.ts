// Leaving the edge zone out: summaries and peaks over the samples outside it, repetitions that overlap it, bands for
// plots and the stored zone's view. Every expected value is worked out by hand in the comment beside it.
import { describe, expect, it } from 'vitest';
import { runPipeline, statsOf, summarise } from '../../../src/lib/processing/pipeline';
import { buildSessionModel } from '../../../src/lib/processing/session-model';
import {
	EDGE_ZONE_NOT_COMPUTED,
	edgeZoneView,
	edgeZoneWords,
	inEdgeZone,
	reliableRange,
	reliableSpan,
	repetitionsInEdgeZone,
	timeInEdgeZone,
	zoneBands
} from '../../../src/lib/processing/zone-exclusion';
import { cyclePeaks, meanSdOf, normaliseCycles } from '../../../src/lib/processing/cycles';
import { makeRecording } from './helpers';

// eight samples 0.1 s apart
const time = Float64Array.from({ length: 8 }, (_, k) => k / 10);
const x = Float64Array.from([10, 1, 2, 5, 3, -4, 0, -9]);

describe('summarise leaves the edge zone out', () => {
	it('takes peaks, their times, range and mean over the samples outside the zone only (hand-computed)', () => {
		// zone: the first sample and the last two → kept samples 1..5 = [1, 2, 5, 3, −4]
		const row = summarise('right.knee.flexion', 'moment', x, time, 'N·m', { startSamples: 1, endSamples: 2 });
		expect(row.peakPositive).toBe(5);
		expect(row.peakPositiveTime).toBeCloseTo(0.3, 15);
		expect(row.peakNegative).toBe(-4);
		expect(row.peakNegativeTime).toBeCloseTo(0.5, 15);
		expect(row.range).toBe(9); // 5 − (−4)
		expect(row.mean).toBeCloseTo(1.4, 15); // (1 + 2 + 5 + 3 − 4) / 5 = 7 / 5
		expect(row.samples).toBe(5);
		// the whole trial, edge zones included: 10 at 0 s, −9 at 0.7 s, mean 8 / 8
		expect(row.wholeTrial).toEqual({
			peakPositive: 10,
			peakPositiveTime: 0,
			peakNegative: -9,
			peakNegativeTime: time[7],
			range: 19,
			mean: 1,
			samples: 8
		});
		expect(row.dof).toBe('right.knee.flexion');
		expect(row.unit).toBe('N·m');
	});

	it('with no zone both are the whole trial, and a tie is reported at its first time', () => {
		const tie = Float64Array.from([0, 3, 3, -1, -1, 2, 0, 0]);
		const row = summarise('d', 'angle', tie, time, 'rad');
		expect(row.peakPositive).toBe(3);
		expect(row.peakPositiveTime).toBeCloseTo(0.1, 15);
		expect(row.peakNegative).toBe(-1);
		expect(row.peakNegativeTime).toBeCloseTo(0.3, 15);
		expect(row.mean).toBeCloseTo(6 / 8, 15); // 0 + 3 + 3 − 1 − 1 + 2 + 0 + 0 = 6
		const { wholeTrial, ...outside } = row;
		expect({
			peakPositive: outside.peakPositive,
			peakNegative: outside.peakNegative,
			range: outside.range,
			mean: outside.mean,
			samples: outside.samples
		}).toEqual({
			peakPositive: wholeTrial.peakPositive,
			peakNegative: wholeTrial.peakNegative,
			range: wholeTrial.range,
			mean: wholeTrial.mean,
			samples: wholeTrial.samples
		});
	});

	it('gives no figures (NaN, null in JSON) when the zone covers every sample, and keeps the whole-trial ones', () => {
		const row = summarise('d', 'power', x, time, 'W', { startSamples: 4, endSamples: 4 });
		expect(row.samples).toBe(0);
		expect(Number.isNaN(row.peakPositive) && Number.isNaN(row.mean) && Number.isNaN(row.peakNegativeTime)).toBe(true);
		expect(JSON.parse(JSON.stringify(row)).peakPositive).toBeNull();
		expect(row.wholeTrial.peakPositive).toBe(10);
	});

	it('statsOf over a sub-range: samples 2..4 = [2, 5, 3] → max 5 at 0.3 s, min 2 at 0.2 s, mean 10 / 3', () => {
		const s = statsOf(x, time, 2, 4);
		expect([s.peakPositive, s.peakNegative, s.range, s.samples]).toEqual([5, 2, 3, 3]);
		expect(s.mean).toBeCloseTo(10 / 3, 15);
		expect(s.peakNegativeTime).toBeCloseTo(0.2, 15);
	});

	it('the pipeline summary leaves out exactly the run’s own edge zone and keeps the whole trial beside it', () => {
		const built = buildSessionModel({ sex: 'male', bodyMass: 80, stature: 1.8 }, { table: 'de-leva-1996', limbs: ['right.leg'] });
		// the largest angle sits at the very first sample (a falling ramp plus a bump in the middle)
		const rec = makeRecording(built, 401, 100, (n, t) =>
			n === 'right.knee.flexion' ? 1.5 - 0.2 * t + 0.3 * Math.exp(-((t - 2) ** 2) / 0.1) : 0
		);
		const r = runPipeline(built, rec, { cutoffHz: 6 });
		const z = r.edgeZone;
		expect(z.startSamples + z.endSamples).toBeGreaterThan(0);
		const d = r.dofs.find((x) => x.name === 'right.knee.flexion')!;
		const row = r.summary.find((s) => s.dof === 'right.knee.flexion' && s.quantity === 'angle')!;
		// by direct loops over the kept samples and over all of them
		let hi = -Infinity;
		let whole = -Infinity;
		let sum = 0;
		for (let k = 0; k < d.angle.length; k++) {
			whole = Math.max(whole, d.angle[k]);
			if (k < z.startSamples || k >= d.angle.length - z.endSamples) continue;
			hi = Math.max(hi, d.angle[k]);
			sum += d.angle[k];
		}
		expect(row.peakPositive).toBe(hi);
		expect(row.wholeTrial.peakPositive).toBe(whole);
		expect(row.samples).toBe(401 - z.startSamples - z.endSamples);
		expect(row.mean).toBeCloseTo(sum / row.samples, 12);
		// the falling ramp's largest value is at the first sample: inside the zone, so the two figures differ
		expect(row.wholeTrial.peakPositiveTime).toBe(0);
		if (z.startSamples > 0) expect(row.peakPositiveTime).toBe(r.time[z.startSamples]);
	});
});

describe('samples, times and repetitions in the zone', () => {
	const t11 = Float64Array.from({ length: 11 }, (_, k) => k / 10); // 0, 0.1, …, 1.0 s
	const zone = { startSamples: 2, endSamples: 3 }; // samples 0, 1 and 8, 9, 10 inside

	it('marks samples and finds the span outside the zone', () => {
		expect(Array.from(t11, (_, k) => inEdgeZone(k, 11, zone))).toEqual([
			true,
			true,
			false,
			false,
			false,
			false,
			false,
			false,
			true,
			true,
			true
		]);
		expect(reliableRange(11, zone)).toEqual({ first: 2, last: 7 });
		expect(reliableSpan(t11, zone)).toEqual({ from: t11[2], to: t11[7] });
		expect(reliableRange(11, { startSamples: 6, endSamples: 5 })).toBeNull();
		expect(timeInEdgeZone(0.15, reliableSpan(t11, zone))).toBe(true);
		expect(timeInEdgeZone(0.2, reliableSpan(t11, zone))).toBe(false);
		expect(timeInEdgeZone(0.75, reliableSpan(t11, zone))).toBe(true);
		expect(timeInEdgeZone(0.5, null)).toBe(true);
	});

	it('a repetition overlaps the zone unless it lies within 0.2 … 0.7 s', () => {
		// events 0.1 | 0.3 | 0.5 | 0.7 | 0.9 → repetitions 0.1–0.3 (starts inside), 0.3–0.5, 0.5–0.7 (ends on the last kept sample), 0.7–0.9 (ends inside)
		expect(repetitionsInEdgeZone(t11, [0.1, 0.3, 0.5, 0.7, 0.9], zone)).toEqual([true, false, false, true]);
		expect(repetitionsInEdgeZone(t11, [0.1, 0.3, 0.5, 0.7, 0.9], { startSamples: 0, endSamples: 0 })).toEqual([false, false, false, false]);
		expect(repetitionsInEdgeZone(t11, [0.3, 0.5], { startSamples: 6, endSamples: 5 })).toEqual([true]);
	});

	it('left-out repetitions change the mean of the peaks (hand-computed)', () => {
		// a ramp 0, 1, …, 10 (one unit per 0.1 s): each repetition's largest value is at its end event × 10
		const ramp = Float64Array.from(t11, (t) => 10 * t);
		const events = [0.1, 0.3, 0.5, 0.7, 0.9];
		const { percent, cycles } = normaliseCycles(t11, ramp, events);
		const peaks = cycles.map((c) => cyclePeaks(percent, c).max);
		peaks.forEach((p, k) => expect(p).toBeCloseTo([3, 5, 7, 9][k], 12));
		const left = repetitionsInEdgeZone(t11, events, zone);
		// all four: (3 + 5 + 7 + 9) / 4 = 6; the two clear of the zone: (5 + 7) / 2 = 6 too, with SD √2 instead of √(20/3)
		expect(meanSdOf(peaks).sd).toBeCloseTo(Math.sqrt(20 / 3), 12);
		const kept = meanSdOf(peaks.filter((_, k) => !left[k]));
		expect(kept.n).toBe(2);
		expect(kept.mean).toBeCloseTo(6, 12);
		expect(kept.sd).toBeCloseTo(Math.SQRT2, 12);
	});

	it('draws one band at each end, from the first sample and up to the last', () => {
		const view = { computed: true, startSeconds: 0.2, endSeconds: 0.3, startSamples: 2, endSamples: 3, basis: 'test' };
		expect(zoneBands(0, 1, view)).toEqual([
			{ end: 'start', from: 0, to: 0.2, seconds: 0.2, samples: 2 },
			{ end: 'end', from: 0.7, to: 1, seconds: 0.3, samples: 3 }
		]);
		expect(zoneBands(0, 1, { ...view, startSeconds: 0, startSamples: 0 })).toHaveLength(1);
		expect(edgeZoneWords(view)).toBe('edge zone: first 0.2 s (2 samples) and last 0.3 s (3 samples)');
	});

	it('a run stored before edge zones has none: zero, and says so', () => {
		const v = edgeZoneView(null);
		expect(v).toEqual({ computed: false, startSeconds: 0, endSeconds: 0, startSamples: 0, endSamples: 0, basis: EDGE_ZONE_NOT_COMPUTED });
		expect(zoneBands(0, 1, v)).toEqual([]);
		expect(edgeZoneWords(v)).toBe('edge zone: not computed (run before edge zones were introduced)');
		expect(edgeZoneView({ startSeconds: 0.125, endSeconds: 0.125, startSamples: 25, endSamples: 25, basis: 'b' })).toEqual({
			computed: true,
			startSeconds: 0.125,
			endSeconds: 0.125,
			startSamples: 25,
			endSamples: 25,
			basis: 'b'
		});
	});
});

describe('a recording wholly inside its edge zones', () => {
	it('fails the run with a reason instead of giving empty figures (the zone is 11 samples at each end at 6 Hz, 200 Hz)', async () => {
		const { buildSessionModel } = await import('../../../src/lib/processing/session-model');
		const { runPipeline, PipelineError } = await import('../../../src/lib/processing/pipeline');
		const { makeRecording } = await import('./helpers');
		const built = buildSessionModel(
			{ sex: 'female', bodyMass: 64, stature: 1.68 },
			{ table: 'de-leva-1996', limbs: ['right.leg'], bases: {}, loads: [], gravity: [0, -9.81, 0] }
		);
		const short = () => makeRecording(built, 20, 200, (n, t) => (n === 'right.knee.flexion' ? 0.6 + 0.4 * Math.sin(Math.PI * t) : 0));
		expect(() => runPipeline(built, short(), { cutoffHz: 6 })).toThrow(PipelineError);
		expect(() => runPipeline(built, short(), { cutoffHz: 6 })).toThrow(/lies wholly inside its edge zones .*record more frames/);
		// without a filter the zone is one sample at each end, and the same recording is processed
		const r = runPipeline(built, short(), { cutoffHz: null });
		expect(r.summary.every((row) => row.samples === 18 && Number.isFinite(row.peakPositive))).toBe(true);
	});
});
