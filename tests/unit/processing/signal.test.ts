// Signal processing against outside references: scipy.signal (butter, lfilter_zi, filtfilt, freqz), the closed-form
// Butterworth magnitude, Taylor error bounds for finite differences, and exactness of polynomial interpolation.
// tests/reference/scipy_filter.py writes the scipy fixture; it is regenerated here when python3 with scipy is present.
import { describe, expect, it } from 'vitest';
import fs from 'node:fs';
import {
	MIN_SAMPLES_FOR_FILTER,
	SignalError,
	butterworthLowPass,
	differentiate,
	fillGaps,
	filtfilt,
	lowPassZeroLag,
	residualAnalysis
} from '../../../src/lib/processing/signal';
import { loadReference } from '../../reference/fixture';

interface Fixture {
	source: string;
	designs: {
		sampleHz: number;
		cutoffHz: number;
		doublePassCorrection: boolean;
		effectiveCutoffHz: number;
		b: number[];
		a: number[];
		zi: number[];
		doublePassGainAtCutoff: number;
	}[];
	signals: { name: string; sampleHz: number; x: number[]; outputs: { cutoffHz: number; doublePassCorrection: boolean; y: number[] }[] }[];
	residual: {
		sampleHz: number;
		sigma: number;
		noiseRms: number;
		highestSignalHz: number;
		x: number[];
		cutoffs: number[];
		residuals: number[];
	};
}

const committed = 'tests/fixtures/processing/scipy-filtfilt.json';

const { fixture, regenerated } = loadReference<Fixture>('tests/reference/scipy_filter.py', committed);

/** Largest difference relative to the largest reference magnitude. */
function relErr(got: ArrayLike<number>, want: ArrayLike<number>, scale?: number): number {
	let d = 0,
		s = 0;
	for (let i = 0; i < want.length; i++) {
		d = Math.max(d, Math.abs(got[i] - want[i]));
		s = Math.max(s, Math.abs(want[i]));
	}
	return d / (scale ?? s);
}

function maxAbs(x: ArrayLike<number>): number {
	let m = 0;
	for (let i = 0; i < x.length; i++) m = Math.max(m, Math.abs(x[i]));
	return m;
}

/** |H(e^{jω})|² of b, a evaluated directly from the coefficients. */
function gain2(b: ArrayLike<number>, a: ArrayLike<number>, f: number, fs: number): number {
	const w = (2 * Math.PI * f) / fs;
	const ev = (c: ArrayLike<number>) => {
		let re = 0,
			im = 0;
		for (let k = 0; k < c.length; k++) {
			re += c[k] * Math.cos(k * w);
			im -= c[k] * Math.sin(k * w);
		}
		return re * re + im * im;
	};
	return ev(b) / ev(a);
}

function thrown(fn: () => unknown): SignalError {
	try {
		fn();
	} catch (e) {
		if (e instanceof SignalError) return e;
		throw e;
	}
	throw new Error('expected a SignalError');
}

describe(`scipy.signal reference (${regenerated ? 'regenerated now' : 'committed fixture'}: ${fixture.source})`, () => {
	it('covers three sampling rates, three cutoffs, both corrections and three kinds of signal', () => {
		expect(new Set(fixture.designs.map((d) => d.sampleHz))).toEqual(new Set([100, 200, 1000]));
		expect(new Set(fixture.designs.map((d) => d.cutoffHz))).toEqual(new Set([3, 6, 12]));
		expect(fixture.designs.filter((d) => !d.doublePassCorrection).length).toBe(9);
		expect(new Set(fixture.signals.map((s) => s.name))).toEqual(new Set(['noisy sinusoid', 'step', 'chirp']));
	});

	it.runIf(regenerated)(
		'the committed fixture is what the script writes now (else: rerun tests/reference/scipy_filter.py --out ' + committed + ')',
		() => {
			const old: Fixture = JSON.parse(fs.readFileSync(committed, 'utf8'));
			expect(old.signals.map((s) => s.name)).toEqual(fixture.signals.map((s) => s.name));
			fixture.signals.forEach((s, k) => {
				expect(relErr(old.signals[k].x, s.x)).toBeLessThan(1e-12);
				s.outputs.forEach((o, j) => expect(relErr(old.signals[k].outputs[j].y, o.y)).toBeLessThan(1e-12));
			});
			expect(relErr(old.residual.x, fixture.residual.x)).toBeLessThan(1e-12);
		}
	);

	for (const d of fixture.designs) {
		it(`butter(2) at ${d.cutoffHz} Hz / ${d.sampleHz} Hz ${d.doublePassCorrection ? 'with' : 'without'} double-pass correction: b, a, design cutoff (scipy.signal.butter)`, () => {
			const f = butterworthLowPass(d.cutoffHz, d.sampleHz, { doublePassCorrection: d.doublePassCorrection });
			expect(relErr(f.b, d.b, 1)).toBeLessThan(1e-9);
			expect(relErr(f.a, d.a, 1)).toBeLessThan(1e-9);
			expect(Math.abs(f.effectiveCutoffHz - d.effectiveCutoffHz)).toBeLessThan(1e-9 * d.cutoffHz);
			// scipy.signal.lfilter_zi: the zi in the fixture is the steady state of a unit step for these b, a
			// (zi = A zi + B in transposed direct form II), so a constant passes filtfilt unchanged.
			const [b0, b1, b2] = f.b;
			const [, a1, a2] = f.a;
			expect(Math.abs(-a1 * d.zi[0] + d.zi[1] + b1 - a1 * b0 - d.zi[0])).toBeLessThan(1e-12);
			expect(Math.abs(-a2 * d.zi[0] + b2 - a2 * b0 - d.zi[1])).toBeLessThan(1e-12);
			const flat = filtfilt(f.b, f.a, new Float64Array(40).fill(2.5));
			expect(relErr(flat, new Float64Array(40).fill(2.5))).toBeLessThan(1e-10); // poles near z = 1 at low fc/fs cost digits
		});
	}

	for (const s of fixture.signals) {
		for (const o of s.outputs) {
			it(`filtfilt of the ${s.name} at ${s.sampleHz} Hz, cutoff ${o.cutoffHz} Hz${o.doublePassCorrection ? '' : ' (uncorrected)'} matches scipy.signal.filtfilt to 1e-9`, () => {
				const x = Float64Array.from(s.x);
				const amplitude = maxAbs(x);
				const f = butterworthLowPass(o.cutoffHz, s.sampleHz, { doublePassCorrection: o.doublePassCorrection });
				expect(relErr(filtfilt(f.b, f.a, x), o.y, amplitude)).toBeLessThan(1e-9);
				// scipy's own coefficients through our filtfilt: separates the pass from the design
				const d = fixture.designs.find(
					(e) => e.sampleHz === s.sampleHz && e.cutoffHz === o.cutoffHz && e.doublePassCorrection === o.doublePassCorrection
				)!;
				expect(relErr(filtfilt(d.b, d.a, x), o.y, amplitude)).toBeLessThan(1e-9);
				if (o.doublePassCorrection) expect(relErr(lowPassZeroLag(x, s.sampleHz, o.cutoffHz), o.y, amplitude)).toBeLessThan(1e-9);
				// in place (out = x) gives the same result
				const copy = Float64Array.from(x);
				filtfilt(f.b, f.a, copy, copy);
				expect(relErr(copy, o.y, amplitude)).toBeLessThan(1e-9);
			});
		}
	}

	it('residuals R(fc) match a direct scipy.signal.filtfilt computation to 1e-9', () => {
		const r = fixture.residual;
		const res = residualAnalysis(Float64Array.from(r.x), r.sampleHz);
		expect(res.cutoffs).toEqual(r.cutoffs); // default range 1..min(25, 0.4·fs) step 0.5
		expect(relErr(res.residuals, r.residuals)).toBeLessThan(1e-9);
	});

	it('residual analysis on low-frequency sinusoids plus white noise of known σ: intercept ≈ σ, cutoff above the content', () => {
		// Known truth: the noise was drawn with σ = 0.02 (numpy default_rng, seeded); the clean part has no content above
		// 3.6 Hz. Winter's method (from memory) estimates the noise RMS by the intercept; we accept 10 %.
		const r = fixture.residual;
		const res = residualAnalysis(Float64Array.from(r.x), r.sampleHz);
		expect(Math.abs(res.noiseLine.intercept - r.sigma) / r.sigma).toBeLessThan(0.1);
		expect(Math.abs(res.noiseLine.intercept - r.noiseRms) / r.noiseRms).toBeLessThan(0.1);
		expect(res.noiseLine.slope).toBeLessThan(0);
		// Band (our choice): above the highest component, and below 10 Hz where the residual is all noise.
		expect(res.suggestedHz).toBeGreaterThan(r.highestSignalHz);
		expect(res.suggestedHz).toBeLessThan(10);
	});
});

describe('zero-lag Butterworth: the double pass is −3 dB at the cutoff', () => {
	// Closed form of the digital (bilinear, pre-warped) Butterworth of order 2: |H|² = 1 / (1 + (tan(πf/fs) / tan(πf_d/fs))^4)
	// (e.g. Oppenheim & Schafer, Discrete-Time Signal Processing, §7.1 — from memory). Run twice, the power gain is |H|⁴.
	const cases: [number, number][] = [
		[3, 100],
		[6, 100],
		[12, 100],
		[6, 200],
		[45, 100],
		[0.5, 1000],
		[200, 1000]
	];
	// 1e-10: at fc/fs = 1/2000 the coefficients b ≈ 1e-5 make the direct evaluation of |H|² lose a few digits.
	for (const [fc, fs] of cases) {
		it(`${fc} Hz at ${fs} Hz: |H(fc)|⁴ = 1/2 with the correction, 1/4 without`, () => {
			const f = butterworthLowPass(fc, fs);
			expect(Math.abs(gain2(f.b, f.a, fc, fs) ** 2 - 0.5)).toBeLessThan(1e-10);
			expect(f.effectiveCutoffHz).toBeLessThan(fs / 2);
			for (const g of [0.3 * fc, fc, 1.7 * fc]) {
				if (g >= fs / 2) continue;
				const closed = 1 / (1 + (Math.tan((Math.PI * g) / fs) / Math.tan((Math.PI * f.effectiveCutoffHz) / fs)) ** 4);
				expect(Math.abs(gain2(f.b, f.a, g, fs) - closed)).toBeLessThan(1e-10);
			}
			const plain = butterworthLowPass(fc, fs, { doublePassCorrection: false });
			expect(Math.abs(gain2(plain.b, plain.a, fc, fs) ** 2 - 0.25)).toBeLessThan(1e-10);
			expect(plain.effectiveCutoffHz).toBe(fc);
			// unit gain at 0 Hz
			expect(Math.abs(gain2(f.b, f.a, 0, fs) - 1)).toBeLessThan(1e-10);
		});
	}

	it('far below Nyquist the design cutoff is the shortcut fc / 0.802 (Winter 2009 p. 69, as quoted by Selling 2018)', () => {
		const f = butterworthLowPass(3, 1000);
		expect(Math.abs(f.effectiveCutoffHz * 0.802 - 3) / 3).toBeLessThan(1e-3);
	});

	it('the double-pass gain from the fixture (scipy.signal.freqz) is 1/2 with the correction and 1/4 without', () => {
		for (const d of fixture.designs) {
			expect(Math.abs(d.doublePassGainAtCutoff - (d.doublePassCorrection ? 0.5 : 0.25))).toBeLessThan(1e-9);
		}
	});
});

describe('bad filter settings are refused with a message a person can act on', () => {
	it('cutoff at or above Nyquist, zero, negative or not a number', () => {
		let e = thrown(() => butterworthLowPass(50, 100));
		expect(e.code).toBe('cutoff-above-nyquist');
		expect(e.message).toContain('50 Hz');
		expect(thrown(() => butterworthLowPass(60, 100)).code).toBe('cutoff-above-nyquist');
		expect(thrown(() => butterworthLowPass(0, 100)).code).toBe('invalid-cutoff');
		expect(thrown(() => butterworthLowPass(-3, 100)).code).toBe('invalid-cutoff');
		expect(thrown(() => butterworthLowPass(Number.NaN, 100)).code).toBe('invalid-cutoff');
		e = thrown(() => butterworthLowPass(6, 0));
		expect(e.code).toBe('invalid-sample-rate');
		expect(thrown(() => lowPassZeroLag(new Float64Array(100), 100, 50)).code).toBe('cutoff-above-nyquist');
	});

	it('signals shorter than padlen + 1 (scipy.signal.filtfilt: "must be greater than padlen", padlen = 9)', () => {
		expect(MIN_SAMPLES_FOR_FILTER).toBe(3 * 3 + 1);
		const e = thrown(() => lowPassZeroLag(new Float64Array(MIN_SAMPLES_FOR_FILTER - 1), 100, 6));
		expect(e.code).toBe('too-few-samples');
		expect(e.message).toContain(String(MIN_SAMPLES_FOR_FILTER));
		expect(lowPassZeroLag(new Float64Array(MIN_SAMPLES_FOR_FILTER).fill(1), 100, 6).length).toBe(MIN_SAMPLES_FOR_FILTER);
		const { b, a } = butterworthLowPass(6, 100);
		expect(thrown(() => filtfilt(b, a, new Float64Array(9))).code).toBe('too-few-samples');
	});

	it('missing samples are refused, naming the sample', () => {
		const x = new Float64Array(50).fill(1);
		x[17] = Number.NaN;
		const e = thrown(() => lowPassZeroLag(x, 100, 6));
		expect(e.code).toBe('missing-samples');
		expect(e.message).toContain('Sample 18 of 50');
	});
});

describe('differentiate: finite differences against the analytic derivatives of a sinusoid', () => {
	// x = A sin(ωt + φ). Bounds from Taylor's theorem with the Lagrange remainder (any numerical-analysis text, e.g.
	// Burden & Faires, Numerical Analysis, §4.1 — from memory), with |x'''| ≤ Aω³ and |x''''| ≤ Aω⁴:
	//   central velocity      |v − x'| ≤ Aω³h²/6        central acceleration  |a − x''| ≤ Aω⁴h²/12
	//   one-sided velocity    |v − x'| ≤ Aω³h²  (remainders h²/3 + 2h²/3)
	//   one-sided acceleration |a − x''| ≤ (5 + 64 + 81)/24 · Aω⁴h² = 6.25 Aω⁴h²
	const A = 0.7,
		w = 2 * Math.PI * 1.3,
		phi = 0.4;
	function sampled(fs: number, n: number) {
		const h = 1 / fs;
		const x = new Float64Array(n);
		for (let i = 0; i < n; i++) x[i] = A * Math.sin(w * i * h + phi);
		return { h, x, v: (i: number) => A * w * Math.cos(w * i * h + phi), a: (i: number) => -A * w * w * Math.sin(w * i * h + phi) };
	}
	function errors(fs: number) {
		const n = 2 * fs;
		const s = sampled(fs, n);
		const d = differentiate(s.x, s.h);
		let ev = 0,
			ea = 0;
		for (let i = 1; i < n - 1; i++) {
			ev = Math.max(ev, Math.abs(d.velocity[i] - s.v(i)));
			ea = Math.max(ea, Math.abs(d.acceleration[i] - s.a(i)));
		}
		const ends = [0, n - 1];
		return {
			s,
			d,
			ev,
			ea,
			endV: Math.max(...ends.map((i) => Math.abs(d.velocity[i] - s.v(i)))),
			endA: Math.max(...ends.map((i) => Math.abs(d.acceleration[i] - s.a(i))))
		};
	}

	it('within the O(h²) bounds inside and at the ends (100 Hz)', () => {
		const { s, ev, ea, endV, endA } = errors(100);
		const h2 = s.h * s.h;
		expect(ev).toBeLessThanOrEqual((A * w ** 3 * h2) / 6);
		expect(ea).toBeLessThanOrEqual((A * w ** 4 * h2) / 12);
		expect(endV).toBeLessThanOrEqual(A * w ** 3 * h2);
		expect(endA).toBeLessThanOrEqual(6.25 * A * w ** 4 * h2);
		// and the bound is nearly attained, so it is a real check of the formula (not of a zero)
		expect(ev).toBeGreaterThan(0.9 * ((A * w ** 3 * h2) / 6));
	});

	it('halving the step quarters the error (second order)', () => {
		const e1 = errors(100),
			e2 = errors(200);
		expect(e1.ev / e2.ev).toBeGreaterThan(3.9);
		expect(e1.ev / e2.ev).toBeLessThan(4.1);
		expect(e1.ea / e2.ea).toBeGreaterThan(3.9);
		expect(e1.ea / e2.ea).toBeLessThan(4.1);
		expect(e1.endV / e2.endV).toBeGreaterThan(3.5);
		expect(e1.endA / e2.endA).toBeGreaterThan(3.5);
	});

	it('exact for a quadratic (velocity, all samples) and a cubic (acceleration at the ends)', () => {
		// The central formulas and the 3-point one-sided velocity are exact for polynomials of degree ≤ 2,
		// the 4-point one-sided acceleration for degree ≤ 3 (their Taylor remainders vanish).
		const h = 0.01,
			n = 30;
		const q = new Float64Array(n).map((_, i) => 0.3 + 1.2 * (i * h) - 4 * (i * h) ** 2);
		const dq = differentiate(q, h);
		for (let i = 0; i < n; i++) {
			expect(Math.abs(dq.velocity[i] - (1.2 - 8 * i * h))).toBeLessThan(1e-10);
			expect(Math.abs(dq.acceleration[i] + 8)).toBeLessThan(1e-8);
		}
		const c = new Float64Array(n).map((_, i) => 2 * (i * h) ** 3);
		const dc = differentiate(c, h);
		expect(Math.abs(dc.acceleration[0] - 0)).toBeLessThan(1e-8);
		expect(Math.abs(dc.acceleration[n - 1] - 12 * (n - 1) * h)).toBeLessThan(1e-8);
	});

	it('writes into given arrays and refuses too few samples or aliasing', () => {
		const x = new Float64Array([0, 1, 4, 9, 16]);
		const velocity = new Float64Array(5),
			acceleration = new Float64Array(5);
		const d = differentiate(x, 1, { velocity, acceleration });
		expect(d.velocity).toBe(velocity);
		expect(d.acceleration).toBe(acceleration);
		expect(Array.from(velocity)).toEqual([0, 2, 4, 6, 8]);
		expect(thrown(() => differentiate(new Float64Array(3), 0.01)).code).toBe('too-few-samples');
		expect(thrown(() => differentiate(x, 0)).code).toBe('invalid-argument');
		expect(thrown(() => differentiate(x, 1, { velocity: x })).code).toBe('invalid-argument');
	});
});

describe('fillGaps: local cubic through two valid samples on each side', () => {
	// The interpolating polynomial of degree ≤ 3 through 4 points is unique, so a cubic is reproduced exactly
	// (uniqueness of polynomial interpolation). A natural spline would not do this (its zero end curvature
	// differs from the cubic's), which is why the check is exact only for the local method we use.
	const p = (t: number) => 1 + 0.5 * t - 0.2 * t * t + 0.03 * t * t * t;
	const n = 40;

	it('recovers a cubic exactly across gaps up to the limit and reports a longer one', () => {
		const x = new Float64Array(n).map((_, i) => p(i));
		for (let i = 10; i < 15; i++) x[i] = Number.NaN; // 5 missing: filled
		for (let i = 25; i < 28; i++) x[i] = Number.NaN; // 3 missing: filled
		for (let i = 31; i < 37; i++) x[i] = Number.NaN; // 6 missing: too long
		const r = fillGaps(x, 5);
		expect(r.gaps).toEqual([
			{ start: 10, length: 5 },
			{ start: 25, length: 3 }
		]);
		expect(r.tooLong).toEqual([{ start: 31, length: 6 }]);
		for (let i = 0; i < 31; i++) expect(Math.abs(r.filled[i] - p(i))).toBeLessThan(1e-12 * maxAbs([p(i), 1]) * 100);
		for (let i = 31; i < 37; i++) expect(Number.isNaN(r.filled[i])).toBe(true);
		expect(Number.isNaN(x[12])).toBe(true); // the input is not changed
	});

	it('gaps at the very start or end are not extrapolated', () => {
		const x = new Float64Array(n).map((_, i) => p(i));
		x[0] = x[1] = Number.NaN;
		x[n - 1] = Number.NaN;
		const r = fillGaps(x, 10);
		expect(r.gaps).toEqual([]);
		expect(r.tooLong).toEqual([
			{ start: 0, length: 2 },
			{ start: n - 1, length: 1 }
		]);
		expect(Number.isNaN(r.filled[0]) && Number.isNaN(r.filled[n - 1])).toBe(true);
	});

	it('with one valid neighbour on a side, a quadratic is still exact (degree drops to 2)', () => {
		const q = (t: number) => 2 - 0.4 * t + 0.05 * t * t;
		const x = new Float64Array(12).map((_, i) => q(i));
		x[1] = Number.NaN; // only x[0] before it: nodes 0, 2, 3
		x[6] = x[7] = Number.NaN; // x[9] missing too: nodes 4, 5, 8
		x[9] = Number.NaN; // x[7] missing: nodes 8, 10, 11
		const r = fillGaps(x, 3);
		expect(r.gaps).toEqual([
			{ start: 1, length: 1 },
			{ start: 6, length: 2 },
			{ start: 9, length: 1 }
		]);
		for (let i = 0; i < 12; i++) expect(Math.abs(r.filled[i] - q(i))).toBeLessThan(1e-12);
	});

	it('refuses a negative or fractional limit', () => {
		expect(thrown(() => fillGaps(new Float64Array(5), -1)).code).toBe('invalid-argument');
		expect(thrown(() => fillGaps(new Float64Array(5), 2.5)).code).toBe('invalid-argument');
	});
});
