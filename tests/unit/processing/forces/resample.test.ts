// Forces at a whole multiple of the angle rate brought to the angle rate, against scipy.signal (butter with the
// double-pass correction, filtfilt with its defaults, then y[::k]): tests/reference/scipy_force_resample.py writes the
// fixture; it is regenerated here when python3 with scipy is present.
import { describe, expect, it } from 'vitest';
import fs from 'node:fs';
import {
	ANTI_ALIAS_SHARE,
	forceCutoffHz,
	forceRateRatio,
	ForceError,
	labToPlate,
	plateLoadsAtAngleRate,
	plateToLab,
	resampleChannel,
	resamplePlateSignals,
	resampleVectors,
	type ForcePlate
} from '../../../../src/lib/processing/forces';
import { SignalError } from '../../../../src/lib/processing/signal';
import { loadReference, relErr } from '../../../reference/fixture';
import { plate1 as plate } from './plates';

interface Fixture {
	source: string;
	cases: {
		angleHz: number;
		ratio: number;
		forceHz: number;
		askedCutoffHz: number;
		usedCutoffHz: number;
		angleSamples: number;
		x: number[];
		kept: number[];
	}[];
}

const committed = 'tests/fixtures/processing/scipy-force-resample.json';
const { fixture, regenerated } = loadReference<Fixture>('tests/reference/scipy_force_resample.py', committed);

describe(`resampling against scipy.signal (${regenerated ? 'regenerated now' : 'committed fixture'}: ${fixture.source})`, () => {
	it.runIf(regenerated)('the committed fixture is what the script writes now (else rerun the script with --out ' + committed + ')', () => {
		const old: Fixture = JSON.parse(fs.readFileSync(committed, 'utf8'));
		fixture.cases.forEach((c, k) => {
			expect(relErr(old.cases[k].x, c.x)).toBeLessThan(1e-12);
			expect(relErr(old.cases[k].kept, c.kept)).toBeLessThan(1e-12);
		});
	});

	for (const c of fixture.cases) {
		it(`${c.forceHz} Hz → ${c.angleHz} Hz (k = ${c.ratio}), cutoff ${c.askedCutoffHz} Hz asked, ${c.usedCutoffHz} Hz used: filtfilt then [::k] (tolerance 1e-9 of the peak)`, () => {
			expect(forceRateRatio(c.forceHz, c.angleHz)).toBe(c.ratio);
			expect(forceCutoffHz(c.angleHz, c.ratio, c.askedCutoffHz)).toBeCloseTo(c.usedCutoffHz, 12);
			const x = Float64Array.from(c.x);
			const y = resampleChannel(x, { forceHz: c.forceHz, angleHz: c.angleHz, cutoffHz: c.askedCutoffHz, angleSamples: c.angleSamples });
			expect(y.length).toBe(c.angleSamples);
			expect(relErr(y, c.kept)).toBeLessThan(1e-9);
			// the same channel as one component of interleaved vectors
			const x3 = new Float64Array(3 * x.length);
			for (let i = 0; i < x.length; i++) x3[3 * i + 1] = x[i];
			const y3 = resampleVectors(x3, { forceHz: c.forceHz, angleHz: c.angleHz, cutoffHz: c.askedCutoffHz, angleSamples: c.angleSamples });
			expect(
				relErr(
					y3.filter((_, i) => i % 3 === 1),
					c.kept
				)
			).toBeLessThan(1e-9);
		});
	}
});

describe('rate ratio and cutoff rules', () => {
	it('a whole ratio within 1e-6 is accepted; anything else refused with both rates in the message', () => {
		expect(forceRateRatio(1000, 200)).toBe(5);
		expect(forceRateRatio(200, 200)).toBe(1);
		expect(forceRateRatio(1000.0000001, 200)).toBe(5);
		expect(() => forceRateRatio(1000, 300)).toThrow(
			'The forces are sampled at 1000 Hz and the angles at 300 Hz: the ratio 3.33333 is not a whole number (within 0.000001). Forces must be recorded at the angle rate or a whole multiple of it (e.g. 1000 Hz with 200 Hz angles).'
		);
		expect(() => forceRateRatio(1000.01, 200)).toThrow(/the ratio 5\.00005 is not a whole number/);
		expect(() => forceRateRatio(100, 200)).toThrow(/ratio 0\.5 is not a whole number/);
		expect(() => forceRateRatio(0, 200)).toThrow(/force sampling rate must be a positive number/);
	});

	it('cutoff: the run’s, at most 0.4 × the angle Nyquist when decimating; unfiltered only at k = 1', () => {
		expect(ANTI_ALIAS_SHARE).toBe(0.4);
		expect(forceCutoffHz(200, 5, 6)).toBe(6);
		expect(forceCutoffHz(200, 5, 50)).toBe(40);
		expect(forceCutoffHz(200, 5, null)).toBe(40);
		expect(forceCutoffHz(200, 1, null)).toBe(null);
		expect(forceCutoffHz(200, 1, 50)).toBe(50);
	});

	it('unfiltered at k = 1 is the signal itself; lengths that do not cover the angle samples are refused', () => {
		const x = Float64Array.from({ length: 50 }, (_, i) => Math.sin(i));
		expect([...resampleChannel(x, { forceHz: 100, angleHz: 100, cutoffHz: null })]).toEqual([...x]);
		expect(() => resampleChannel(x, { forceHz: 500, angleHz: 100, cutoffHz: 6, angleSamples: 20, label: 'plate1.force.z' })).toThrow(
			'plate1.force.z: 50 force samples at 500 Hz do not cover 20 angle samples at 100 Hz (20 angle samples need 96 to 100 force samples at 5× the rate).'
		);
	});

	it('a missing force sample is refused with the channel and the sample number', () => {
		const x = new Float64Array(300 * 3).fill(1);
		x[3 * 17 + 2] = NaN;
		expect(() => resampleVectors(x, { forceHz: 1000, angleHz: 200, cutoffHz: 6, label: 'plate1.force' })).toThrow(
			'plate1.force.z: Sample 18 of 300 is missing or not a number; fill the gaps (or trim the recording) before filtering.'
		);
		expect(() => resampleVectors(x, { forceHz: 1000, angleHz: 200, cutoffHz: 6 })).toThrow(SignalError);
		expect(() => resampleChannel(new Float64Array(10), { forceHz: 1000, angleHz: 300, cutoffHz: 6 })).toThrow(ForceError);
	});
});

describe('plate signals at the angle rate', () => {
	// A load held constant is unchanged by a low-pass filter with unit DC gain (butter's b sum / a sum = 1), so the CoP from
	// the filtered force and moment equals the CoP put in, at every kept sample — for both plate outputs.
	it('constant load through both outputs: CoP, GRF and free moment unchanged (unit DC gain)', () => {
		const n = 1000;
		const grf = new Float64Array(3 * n),
			cop = new Float64Array(3 * n),
			fm = new Float64Array(3 * n);
		for (let i = 0; i < n; i++) {
			grf.set([-40, 800, 20], 3 * i);
			cop.set([1.123, 0, 0.576], 3 * i);
			fm.set([0, 10.5, 0], 3 * i);
		}
		for (const output of ['forces-moments', 'forces-cop'] as const) {
			const p = { ...plate, output };
			const signals = labToPlate(p, { grf, cop, freeMoment: fm });
			const r = plateLoadsAtAngleRate(p, signals, { forceHz: 1000, angleHz: 200, cutoffHz: 6 });
			expect(r.cop.length).toBe(3 * 200);
			for (let j = 0; j < 200; j++) {
				expect(Math.abs(r.cop[3 * j] - 1.123)).toBeLessThan(1e-9);
				expect(Math.abs(r.cop[3 * j + 2] - 0.576)).toBeLessThan(1e-9);
				expect(Math.abs(r.grf[3 * j + 1] - 800)).toBeLessThan(1e-7);
				expect(Math.abs(r.freeMoment[3 * j + 1] - 10.5)).toBeLessThan(1e-8);
			}
		}
	});

	it('a forces-cop plate whose CoP is NaN while unloaded is accepted; resampled moments feed plateToLab', () => {
		const n = 100;
		const p: ForcePlate = { ...plate, output: 'forces-cop' };
		const force = new Float64Array(3 * n),
			cop = new Float64Array(3 * n).fill(NaN),
			freeMoment = new Float64Array(n).fill(NaN);
		const r = resamplePlateSignals(p, { force, cop, freeMoment }, { forceHz: 500, angleHz: 100, cutoffHz: 6 });
		expect(r.moment.every((m) => m === 0)).toBe(true);
		expect(plateToLab(p, r, { output: 'forces-moments' }).loaded.every((l) => l === 0)).toBe(true);
		expect(() => resamplePlateSignals(plate, { force }, { forceHz: 500, angleHz: 100, cutoffHz: 6 })).toThrow(
			'plate1: the plate outputs forces and moments, but the recording has no moments.'
		);
	});
});
