// The session review's repetitions (src/lib/components/review/repetitions.ts) on a straight ramp, whose normalised
// repetitions, means, sample SDs and peaks follow in closed form: a ramp v = t cut at 0, 2 and 4 s gives the repetitions
// v = 2j/100 and v = 2 + 2j/100 at point j (0–100); two values 2 apart have the mean between them and the sample SD 2/√2.
import { describe, expect, it } from 'vitest';
import { peakMeans, repetitionsOf } from '../../../src/lib/components/review/repetitions';
import type { ReviewCurve } from '../../../src/lib/types/review';

const t = [0, 1, 2, 3, 4];
const ramp = (unit: string, scale = 1): ReviewCurve => ({
	name: 'right.knee.flexion',
	unit,
	positive: null,
	v: t.map((x) => x * scale),
	drawn: []
});

describe('repetitionsOf and peakMeans', () => {
	it('cut a ramp into two repetitions: mean and sample SD point by point, peaks at 0 and 100 %', () => {
		const [r] = repetitionsOf(t, [ramp('N·m')], [0, 2, 4], [false, false]);
		expect(r.percent).toHaveLength(101);
		for (const j of [0, 37, 100]) {
			expect(r.ms.mean[j]).toBeCloseTo(1 + (2 * j) / 100, 12);
			expect(r.ms.sd[j]).toBeCloseTo(Math.SQRT2, 12);
		}
		expect(r.peaks).toEqual([
			{ max: 2, maxAt: 100, min: 0, minAt: 0 },
			{ max: 4, maxAt: 100, min: 2, minAt: 0 }
		]);
		const m = peakMeans(r.peaks, [false, false]);
		expect(m.max.mean).toBeCloseTo(3, 12);
		expect(m.max.sd).toBeCloseTo(Math.SQRT2, 12);
		expect(m.min.mean).toBeCloseTo(1, 12);
		expect(m.maxAt).toEqual({ mean: 100, sd: 0, n: 2 });
	});

	it('leave a repetition out of the means but keep its peaks listed', () => {
		const [r] = repetitionsOf(t, [ramp('N·m')], [0, 2, 4], [true, false]);
		expect(r.ms.mean[0]).toBe(2);
		expect(r.ms.sd[0]).toBeNaN();
		expect(r.peaks).toHaveLength(2);
		const m = peakMeans(r.peaks, [true, false]);
		expect(m.max.mean).toBe(4);
		expect(m.max.n).toBe(1);
		expect(m.max.sd).toBeNaN();
	});

	it('show angles in °: a ramp of 1 rad per second peaks at 4 rad = 720/π °', () => {
		const [r] = repetitionsOf(t, [ramp('rad')], [0, 2, 4], [false, false]);
		expect(r.du.unit).toBe('°');
		expect(r.peaks[1].max).toBeCloseTo(720 / Math.PI, 10);
	});
});
