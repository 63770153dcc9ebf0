// End treatments: how a recording is continued beyond its first and last samples before zero-lag filtering and
// differentiation, and the edge zone — the stretch at each end where the results are still not reliable.
//
// Pure TypeScript over Float64Array, no I/O. Choices, sources and the measurements behind the default are in
// docs/processing.md ("Filtering and derivatives", "Ends of a recording").
import { butterworthLowPass, differentiate, filtfilt, SignalError } from './signal';

/**
 * The end treatments a run can use:
 *  - `prediction`: linear prediction — an autoregressive model fitted by Burg's method to the last (first) 4 s,
 *    order 0.2 s × the sampling rate, continues the signal (Giakas, Baltzopoulos & Bartlett 1998, J Biomech
 *    31:87–91, "prediction": an autoregressive model applied in both directions — from the abstract; Burg's
 *    method as in Press et al., Numerical Recipes, §13.6, memcof/predic — from memory);
 *  - `cubic`: a least-squares cubic over the last (first) fs/fc samples, extrapolated (Giakas et al. 1998,
 *    "least squares": a third-degree polynomial fitted to the final points — from the abstract);
 *  - `linear`: a least-squares line over the last (first) fs/(3 fc) samples, extrapolated ("linear
 *    extrapolation" padding, Vint & Hinrichs 1996, J Biomech 29:1637–1642 — from the abstract; Smith 1989,
 *    J Biomech 22:967–971 — from memory);
 *  - `reflect`: point reflection about the end sample (scipy.signal.filtfilt padtype 'odd') over the filter's
 *    whole settling length instead of 9 samples (long reflected padding: Howarth & Callaghan 2009, J Electromyogr
 *    Kinesiol 19:875–881 — from memory);
 *  - `reflect-9`: scipy.signal.filtfilt's defaults (9 samples of point reflection) and one-sided second-order
 *    differences at the first and last samples — what every run used before end treatments existed.
 * All but `reflect-9` differentiate the continued, filtered signal with central differences and then cut the
 * continuation off, so the first and last samples get central differences too.
 */
export const END_TREATMENTS = ['prediction', 'cubic', 'linear', 'reflect', 'reflect-9'] as const;
export type EndTreatment = (typeof END_TREATMENTS)[number];
/** The default, chosen by measurement (docs/processing.md, "Ends of a recording"; `npm run bench:edges`). */
export const DEFAULT_END_TREATMENT: EndTreatment = 'prediction';

/** One line per treatment, for provenance and the edge zone's basis. */
export const END_TREATMENT_LABELS: Record<EndTreatment, string> = {
	prediction: 'continued by linear prediction (Burg autoregressive model)',
	cubic: 'continued by a least-squares cubic',
	linear: 'continued by a least-squares line',
	reflect: 'continued by point reflection over the filter’s settling length',
	'reflect-9': 'continued by 9 samples of point reflection, one-sided differences at the ends'
};

/** Relative size to which the filter's start-up transient has decayed at the trial's first sample. */
const SETTLED = 1e-8;
/** Linear prediction: history used for fitting (s) and the model order as a share of the sampling rate (0.2 s of samples). */
const PREDICTION_FIT_SECONDS = 4;
const PREDICTION_ORDER_SECONDS = 0.2;

/**
 * Samples after which the start-up transient of the zero-lag filter at cutoffHz has decayed to 1e-8 of its size:
 * the second-order Butterworth's poles are complex with radius r = √a₂ (a₂ is their product), so a transient
 * shrinks like rᵏ and L = ⌈ln 10⁻⁸ / ln r⌉. Every treatment but `reflect-9` continues the signal this far.
 */
export function settlingSamples(cutoffHz: number, sampleHz: number): number {
	const { a } = butterworthLowPass(cutoffHz, sampleHz);
	return Math.ceil(Math.log(SETTLED) / Math.log(Math.sqrt(a[2])));
}

/** Samples of continuation at each end: the settling length when filtered, one sample (for the central differences) when not. */
export function continuationSamples(treatment: EndTreatment, n: number, sampleHz: number, cutoffHz: number | null): number {
	if (treatment === 'reflect-9') return cutoffHz === null ? 0 : 9;
	const L = cutoffHz === null ? 1 : settlingSamples(cutoffHz, sampleHz);
	return treatment === 'reflect' ? Math.min(L, n - 1) : L;
}

/** Least-squares polynomial window (samples) of `cubic` and `linear`: degree + 1 (interpolation) without a filter. */
export function polynomialWindow(treatment: 'cubic' | 'linear', n: number, sampleHz: number, cutoffHz: number | null): number {
	const degree = treatment === 'cubic' ? 3 : 1;
	if (cutoffHz === null) return Math.min(n, degree + 1);
	const w = Math.round(treatment === 'cubic' ? sampleHz / cutoffHz : sampleHz / (3 * cutoffHz));
	return Math.min(n, Math.max(degree + 1, w));
}

/** Linear prediction's fitting window and order for a signal of n samples. */
export function predictionModel(n: number, sampleHz: number): { window: number; order: number } {
	const window = Math.min(n, Math.round(PREDICTION_FIT_SECONDS * sampleHz));
	const order = Math.max(1, Math.min(Math.round(PREDICTION_ORDER_SECONDS * sampleHz), Math.floor(window / 3)));
	return { window, order };
}

/**
 * Burg's method: the autoregressive coefficients a (a[0] = 1; x_t + a₁x_{t−1} + … + a_p x_{t−p} = e_t) that
 * minimise the sum of squared forward and backward prediction errors, one reflection coefficient per order
 * (Burg 1967; as in Press et al., Numerical Recipes, §13.6 — from memory). Every |k| ≤ 1, so the model is stable
 * and its predictions do not grow without bound. `x` is used as is (subtract its mean first if needed).
 */
export function burgCoefficients(x: Float64Array, order: number): Float64Array {
	const n = x.length;
	if (!Number.isInteger(order) || order < 1 || order >= n) {
		throw new SignalError(
			'invalid-argument',
			`A prediction model of order ${order} needs a whole order from 1 to ${n - 1} for ${n} samples.`
		);
	}
	const f = Float64Array.from(x),
		b = Float64Array.from(x);
	const a = new Float64Array(order + 1);
	const prev = new Float64Array(order + 1);
	a[0] = 1;
	for (let m = 1; m <= order; m++) {
		let num = 0,
			den = 0;
		for (let i = m; i < n; i++) {
			num += f[i] * b[i - 1];
			den += f[i] * f[i] + b[i - 1] * b[i - 1];
		}
		const k = den > 0 ? (-2 * num) / den : 0;
		prev.set(a);
		for (let i = 1; i <= m; i++) a[i] = prev[i] + k * prev[m - i];
		// errors of order m; descending so that b[i − 1] is still the order m − 1 value
		for (let i = n - 1; i >= m; i--) {
			const fi = f[i] + k * b[i - 1];
			b[i] = b[i - 1] + k * f[i];
			f[i] = fi;
		}
	}
	return a;
}

/**
 * Values of the continuation beyond one end: out[j − 1] for the sample j = 1 … out.length beyond the first
 * sample (fromStart) or the last. `at(i)` reads the signal i samples inward from that end.
 */
function continueEnd(
	x: Float64Array,
	fromStart: boolean,
	treatment: EndTreatment,
	sampleHz: number,
	cutoffHz: number | null,
	out: Float64Array
): void {
	const n = x.length;
	const at = fromStart ? (i: number) => x[i] : (i: number) => x[n - 1 - i];
	const x0 = at(0);
	const L = out.length;
	switch (treatment) {
		case 'reflect':
		case 'reflect-9':
			for (let j = 1; j <= L; j++) out[j - 1] = 2 * x0 - at(j);
			return;
		case 'cubic':
		case 'linear': {
			const degree = treatment === 'cubic' ? 3 : 1;
			const w = polynomialWindow(treatment, n, sampleHz, cutoffHz);
			const c = polyfit(at, w, Math.min(degree, w - 1));
			for (let j = 1; j <= L; j++) out[j - 1] = polyval(c, -j / w);
			return;
		}
		case 'prediction': {
			const { window: w, order: p } = predictionModel(n, sampleHz);
			// oldest first, ending at the end sample; centred on the window's median (a spike cannot move it) and
			// scaled to at most 1 (the coefficients do not depend on scale; squares of huge values would overflow)
			const d = new Float64Array(w);
			for (let i = 0; i < w; i++) d[i] = at(i);
			d.sort();
			const centre = w % 2 ? d[(w - 1) / 2] : (d[w / 2 - 1] + d[w / 2]) / 2;
			let scale = 0;
			for (let i = 0; i < w; i++) scale = Math.max(scale, Math.abs(at(i) - centre));
			if (!(scale > 0) || !Number.isFinite(scale)) scale = 1;
			for (let i = 0; i < w; i++) d[i] = (at(w - 1 - i) - centre) / scale;
			const a = burgCoefficients(d, p);
			const hist = new Float64Array(p + L); // hist[p − 1] is the end sample, predictions follow
			for (let i = 0; i < p; i++) hist[i] = d[w - p + i];
			for (let j = 0; j < L; j++) {
				let v = 0;
				for (let i = 1; i <= p; i++) v -= a[i] * hist[p - 1 + j + 1 - i];
				hist[p + j] = v;
				out[j] = v * scale + centre;
			}
			return;
		}
	}
}

/** Least-squares polynomial through (s_i = i / w, at(i)), i = 0 … w − 1: coefficients c₀ + c₁s + …, by the normal equations (degree ≤ 3, s in [0, 1): well conditioned). */
function polyfit(at: (i: number) => number, w: number, degree: number): Float64Array {
	const m = degree + 1;
	const A = new Float64Array(m * m),
		r = new Float64Array(m),
		p = new Float64Array(m);
	for (let i = 0; i < w; i++) {
		const s = i / w,
			y = at(i);
		p[0] = 1;
		for (let k = 1; k < m; k++) p[k] = p[k - 1] * s;
		for (let u = 0; u < m; u++) {
			r[u] += p[u] * y;
			for (let v = 0; v < m; v++) A[u * m + v] += p[u] * p[v];
		}
	}
	// Gaussian elimination with partial pivoting
	for (let c = 0; c < m; c++) {
		let piv = c;
		for (let i = c + 1; i < m; i++) if (Math.abs(A[i * m + c]) > Math.abs(A[piv * m + c])) piv = i;
		if (piv !== c) {
			for (let k = 0; k < m; k++) [A[c * m + k], A[piv * m + k]] = [A[piv * m + k], A[c * m + k]];
			[r[c], r[piv]] = [r[piv], r[c]];
		}
		for (let i = c + 1; i < m; i++) {
			const f = A[i * m + c] / A[c * m + c];
			for (let k = c; k < m; k++) A[i * m + k] -= f * A[c * m + k];
			r[i] -= f * r[c];
		}
	}
	const coef = new Float64Array(m);
	for (let i = m - 1; i >= 0; i--) {
		let s = r[i];
		for (let k = i + 1; k < m; k++) s -= A[i * m + k] * coef[k];
		coef[i] = s / A[i * m + i];
	}
	return coef;
}

function polyval(c: Float64Array, s: number): number {
	let v = 0;
	for (let k = c.length - 1; k >= 0; k--) v = v * s + c[k];
	return v;
}

/**
 * The signal continued by `treatment`: L samples before, the n samples, L samples after (L from
 * continuationSamples). NaN samples are refused (fill gaps first).
 */
export function continueSignal(
	x: Float64Array,
	sampleHz: number,
	cutoffHz: number | null,
	treatment: EndTreatment
): { extended: Float64Array; pad: number } {
	const n = x.length;
	for (let i = 0; i < n; i++) {
		if (!Number.isFinite(x[i])) {
			throw new SignalError(
				'missing-samples',
				`Sample ${i + 1} of ${n} is missing or not a number; fill the gaps (or trim the recording) before filtering.`
			);
		}
	}
	const L = continuationSamples(treatment, n, sampleHz, cutoffHz);
	const extended = new Float64Array(n + 2 * L);
	extended.set(x, L);
	if (L > 0) {
		const part = new Float64Array(L);
		continueEnd(x, true, treatment, sampleHz, cutoffHz, part);
		for (let j = 0; j < L; j++) extended[L - 1 - j] = part[j];
		continueEnd(x, false, treatment, sampleHz, cutoffHz, part);
		extended.set(part, L + n);
	}
	return { extended, pad: L };
}

/** A filtered (or unfiltered) trial and its continuation one sample beyond each end (null for `reflect-9`, whose ends use one-sided differences). */
export interface SmoothedSignal {
	value: Float64Array;
	before: number | null;
	after: number | null;
}

/**
 * Continues x by the treatment, low-pass filters it (zero-lag second-order Butterworth, −3 dB at cutoffHz, the
 * same design as lowPassZeroLag) unless cutoffHz is null, and keeps the trial's n samples in `out` (which may be x)
 * plus the continued, filtered samples just before and after them, for central differences at the ends.
 * `reflect-9` is exactly lowPassZeroLag (scipy.signal.filtfilt's defaults).
 */
export function smoothWithEnds(
	x: Float64Array,
	sampleHz: number,
	cutoffHz: number | null,
	treatment: EndTreatment,
	out?: Float64Array
): SmoothedSignal {
	const n = x.length;
	const value = out ?? new Float64Array(n);
	if (value.length !== n) throw new SignalError('invalid-argument', `The output array has ${value.length} samples; the signal has ${n}.`);
	if (treatment === 'reflect-9') {
		if (cutoffHz === null) {
			if (value !== x) value.set(x);
		} else {
			const { b, a } = butterworthLowPass(cutoffHz, sampleHz);
			filtfilt(b, a, x, value);
		}
		return { value, before: null, after: null };
	}
	if (cutoffHz !== null) butterworthLowPass(cutoffHz, sampleHz); // settings checked before any work
	if (n < 2) throw new SignalError('too-few-samples', `The signal has ${n} sample${n === 1 ? '' : 's'}; continuing it needs at least 2.`);
	if (cutoffHz === null && !x.every(Number.isFinite)) {
		// Nothing sensible continues a signal holding a non-finite sample; unfiltered, it is passed on as it is
		// (one-sided differences at the ends) for the run's check of non-finite results to name where it is.
		if (value !== x) value.set(x);
		return { value, before: null, after: null };
	}
	const { extended, pad } = continueSignal(x, sampleHz, cutoffHz, treatment);
	if (cutoffHz !== null) {
		const { b, a } = butterworthLowPass(cutoffHz, sampleHz);
		filtfilt(b, a, extended, extended, { padType: null });
	}
	value.set(extended.subarray(pad, pad + n));
	return { value, before: extended[pad - 1], after: extended[pad + n] };
}

/**
 * First and second derivatives of a smoothed signal: central differences at every sample, using the continued
 * samples beyond the ends; for `reflect-9` (before/after null) the one-sided formulas of differentiate().
 */
export function differentiateWithEnds(
	s: SmoothedSignal,
	dt: number,
	out?: { velocity?: Float64Array; acceleration?: Float64Array }
): { velocity: Float64Array; acceleration: Float64Array } {
	const d = differentiate(s.value, dt, out);
	if (s.before === null || s.after === null) return d;
	const x = s.value,
		l = x.length - 1;
	d.velocity[0] = (x[1] - s.before) / (2 * dt);
	d.acceleration[0] = (x[1] - 2 * x[0] + s.before) / (dt * dt);
	d.velocity[l] = (s.after - x[l - 1]) / (2 * dt);
	d.acceleration[l] = (s.after - 2 * x[l] + x[l - 1]) / (dt * dt);
	return d;
}

/** Angle, velocity and acceleration of one channel with the given end treatment (filter optional). */
export function smoothAndDifferentiate(
	x: Float64Array,
	sampleHz: number,
	cutoffHz: number | null,
	treatment: EndTreatment
): { value: Float64Array; velocity: Float64Array; acceleration: Float64Array } {
	const s = smoothWithEnds(x, sampleHz, cutoffHz, treatment);
	return { value: s.value, ...differentiateWithEnds(s, 1 / sampleHz) };
}

// ---------------------------------------------------------------------------------------------------------------
// Test signals with known derivatives

/** Uniform numbers in [0, 1) from a seed (mulberry32, a small well-known 32-bit generator), so signals and noise repeat exactly. */
export function seededUniform(seed: number): () => number {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = Math.imul(a ^ (a >>> 15), 1 | a);
		t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

/** Standard normal numbers from a seed (Box–Muller transform of seededUniform). */
export function seededGaussian(seed: number): () => number {
	const u = seededUniform(seed);
	return () => Math.sqrt(-2 * Math.log(1 - u())) * Math.cos(2 * Math.PI * u());
}

/**
 * A smooth random path with exact derivatives: Σ w_k exp(−(t − c_k)² / (2 s²)), Gaussian bumps of width s every
 * `spacing` seconds from before `from` to after `to`, weights w_k normal with standard deviation `amp` (in the
 * path's own unit). Returns [value, first derivative, second derivative] at t. Its spectrum falls as
 * exp(−(2π f s)²/2): smooth like a movement, yet neither a polynomial nor a finite sum of sinusoids, so no end
 * treatment continues it exactly.
 */
export function smoothRandom(
	seed: number,
	amp: number,
	s: number,
	spacing: number,
	from: number,
	to: number
): (t: number) => [number, number, number] {
	const g = seededGaussian(seed);
	const first = from - 4 * s;
	const count = Math.floor((to + 4 * s - first) / spacing) + 1;
	const weights = Float64Array.from({ length: count }, () => amp * g());
	const s2 = s * s,
		reach = 9 * s; // exp(−40.5) ≈ 3e-18: bumps farther away add nothing
	return (t) => {
		let q = 0,
			v = 0,
			a = 0;
		const k0 = Math.max(0, Math.ceil((t - reach - first) / spacing)),
			k1 = Math.min(count - 1, Math.floor((t + reach - first) / spacing));
		for (let k = k0; k <= k1; k++) {
			const d = t - (first + k * spacing);
			const e = weights[k] * Math.exp(-(d * d) / (2 * s2));
			q += e;
			v -= (d / s2) * e;
			a += ((d * d) / (s2 * s2) - 1 / s2) * e;
		}
		return [q, v, a];
	};
}

// ---------------------------------------------------------------------------------------------------------------
// Edge zone

/**
 * The family of movements the edge zone is measured on, and the rule (docs/processing.md, "The edge zone"):
 *  - smoothRandom paths of 10° bumps whose width s = √(2 ln 1000) / (2π fc) puts their spectrum at the cutoff at
 *    1/1000 of its peak (the movement the filter is meant to keep), sampled at the run's rate;
 *  - each without noise and with Gaussian noise of 0.15° (marker-based joint angles: 0.1–0.2°, common practice,
 *    from memory);
 *  - the reference is the same filter and central differences run over a longer stretch of the same noisy path,
 *    so the ends of the longer stretch are settled (settlingSamples) before the trial starts: the difference from
 *    it at sample k from an end, d_k (RMS over realisations and both ends), is the end's own error;
 *  - the middle's error e_mid is the RMS difference between that reference and the truth in the middle;
 *  - a sample is in the zone when d_k > ½ e_mid for the angle, velocity or acceleration, with or without noise.
 *    Outside it the end adds less than half the error the middle has anyway: added in quadrature to it, at most
 *    12 % more (√1.25 = 1.118).
 */
export const EDGE_ZONE_FAMILY = { bumpDeg: 10, noiseDeg: 0.15, realisations: 24, threshold: 0.5, seed: 20261203 } as const;

const zoneCache = new Map<string, number>();

/**
 * Samples at each end inside the edge zone for this filter and treatment (the rule above); cutoffHz null (no
 * filter): 1 — central differences reach only one sample into the continuation, so only the first and last
 * samples use anything but the measured neighbours. Deterministic (seeded) and cached per setting.
 */
export function edgeZoneSamples(sampleHz: number, cutoffHz: number | null, treatment: EndTreatment): number {
	if (cutoffHz === null) return 1;
	const key = `${sampleHz}|${cutoffHz}|${treatment}`;
	const hit = zoneCache.get(key);
	if (hit !== undefined) return hit;
	const F = EDGE_ZONE_FAMILY;
	const deg = Math.PI / 180;
	const h = 1 / sampleHz;
	const P = sampleHz / cutoffHz;
	const width = Math.sqrt(2 * Math.log(1000)) / (2 * Math.PI * cutoffHz);
	const span = Math.ceil(8 * P); // samples examined at each end (the zone is capped there)
	const n = 2 * span + Math.ceil(4 * P);
	const M = settlingSamples(cutoffHz, sampleHz) + 2; // reference stretch beyond each end
	const N = n + 2 * M;
	const { b, a } = butterworthLowPass(cutoffHz, sampleHz);
	let zone = 0;
	for (const noise of [0, F.noiseDeg * deg]) {
		const d2 = [new Float64Array(span), new Float64Array(span), new Float64Array(span)];
		const mid2 = [0, 0, 0];
		let midCount = 0;
		for (let r = 0; r < F.realisations; r++) {
			const path = smoothRandom(F.seed + r, F.bumpDeg * deg, width, (2 * width) / 3, -M * h, (n + M) * h);
			const g = seededGaussian(F.seed + 1000 + r);
			const truth = new Float64Array(3 * N);
			const long = new Float64Array(N);
			for (let k = 0; k < N; k++) {
				const [q, v, acc] = path((k - M) * h);
				truth[3 * k] = q;
				truth[3 * k + 1] = v;
				truth[3 * k + 2] = acc;
				long[k] = q + noise * g();
			}
			const trial = Float64Array.from(long.subarray(M, M + n)); // the trial: the same noisy samples, without what lies beyond
			filtfilt(b, a, long, long, { padType: null });
			const got = smoothAndDifferentiate(trial, sampleHz, cutoffHz, treatment);
			const ref = (k: number, c: number) => {
				const i = k + M;
				return c === 0 ? long[i] : c === 1 ? (long[i + 1] - long[i - 1]) / (2 * h) : (long[i + 1] - 2 * long[i] + long[i - 1]) / (h * h);
			};
			const mine = (k: number, c: number) => (c === 0 ? got.value[k] : c === 1 ? got.velocity[k] : got.acceleration[k]);
			for (let c = 0; c < 3; c++) {
				for (let k = 0; k < span; k++) {
					d2[c][k] += (mine(k, c) - ref(k, c)) ** 2 + (mine(n - 1 - k, c) - ref(n - 1 - k, c)) ** 2;
				}
				for (let k = span; k < n - span; k++) mid2[c] += (ref(k, c) - truth[3 * (k + M) + c]) ** 2;
			}
			midCount += n - 2 * span;
		}
		for (let c = 0; c < 3; c++) {
			const mid = Math.sqrt(mid2[c] / midCount);
			for (let k = span - 1; k >= zone; k--) {
				if (Math.sqrt(d2[c][k] / (2 * F.realisations)) > F.threshold * mid) {
					zone = k + 1;
					break;
				}
			}
		}
	}
	zoneCache.set(key, zone);
	return zone;
}
