// Signal processing for joint-angle recordings: zero-lag Butterworth low-pass, residual analysis, derivatives, gap filling.
//
// Pure TypeScript over Float64Array, no I/O. Every routine writes into preallocated arrays (a caller's `out`
// or one array per call) and allocates nothing per sample: recordings run to 120,000 samples × 26 channels.
// Formulas, choices and sources are written up in docs/processing.md ("Filtering and derivatives").

export type SignalErrorCode =
	| 'invalid-sample-rate'
	| 'invalid-cutoff'
	| 'cutoff-above-nyquist'
	| 'too-few-samples'
	| 'missing-samples'
	| 'invalid-coefficients'
	| 'invalid-argument';

/** Bad input to a signal routine; `message` is written to be shown to the person who chose the setting. */
export class SignalError extends Error {
	constructor(
		public readonly code: SignalErrorCode,
		message: string
	) {
		super(message);
		this.name = 'SignalError';
	}
}

const ORDER = 2;
/** Passes of a zero-lag filter (forward and backward). */
const PASSES = 2;
/**
 * Cutoff correction for a filter run PASSES times: C = (2^(1/n) − 1)^(1/(2·order)), ≈ 0.802 for a second-order
 * filter run twice (Winter 2009, Biomechanics and Motor Control of Human Movement, 4th ed., §3.4, p. 69; Robertson et al.,
 * Research Methods in Biomechanics, 2nd ed., p. 288 — both as quoted in J. Selling, "Multi-pass filter cutoff correction",
 * 2018, which also confirms that C divides the pre-warped tan(π fc / fs), not fc itself; the books were not consulted).
 */
const DOUBLE_PASS_CORRECTION = Math.pow(Math.pow(2, 1 / PASSES) - 1, 1 / (2 * ORDER));

/**
 * Fewest samples a zero-lag second-order filter accepts: scipy.signal.filtfilt's default odd extension is
 * padlen = 3·max(len(a), len(b)) = 9 samples at each end and needs a signal longer than that.
 */
export const MIN_SAMPLES_FOR_FILTER = 3 * (ORDER + 1) + 1;

function checkSampleRate(sampleHz: number): void {
	if (!Number.isFinite(sampleHz) || sampleHz <= 0) {
		throw new SignalError('invalid-sample-rate', `The sampling rate must be a positive number of hertz; got ${sampleHz}.`);
	}
}

function checkCutoff(cutoffHz: number, sampleHz: number): void {
	checkSampleRate(sampleHz);
	if (!Number.isFinite(cutoffHz) || cutoffHz <= 0) {
		throw new SignalError('invalid-cutoff', `The cutoff frequency must be a positive number of hertz; got ${cutoffHz}.`);
	}
	const nyquist = sampleHz / 2;
	if (cutoffHz >= nyquist) {
		throw new SignalError(
			'cutoff-above-nyquist',
			`The cutoff frequency (${cutoffHz} Hz) must be below half the sampling rate (${nyquist} Hz for a recording at ${sampleHz} Hz).`
		);
	}
}

/**
 * Second-order low-pass Butterworth by the bilinear transform with pre-warping (the design of
 * scipy.signal.butter(2, Wn) with Wn = effectiveCutoffHz / (sampleHz / 2)). Coefficients follow lfilter's
 * convention a[0] y[n] + a[1] y[n−1] + a[2] y[n−2] = b[0] x[n] + b[1] x[n−1] + b[2] x[n−2], with a[0] = 1.
 *
 * With doublePassCorrection (default) the filter is meant to be run forward and backward (filtfilt), and the
 * single pass is designed so that the double pass is −3 dB (|H|² = 1/2) exactly at cutoffHz. The correction
 * C = (2^(1/2) − 1)^(1/4) ≈ 0.802 is applied to the pre-warped frequency, tan(π f_design / fs) = tan(π cutoff / fs) / C,
 * because the digital Butterworth's magnitude is |H|² = 1 / (1 + (tan(πf/fs) / tan(πf_design/fs))^4); for
 * cutoff ≪ fs this is the familiar f_design = cutoff / 0.802, and unlike that shortcut it never passes Nyquist.
 *
 * effectiveCutoffHz is the frequency the single pass is designed at (its own −3 dB point): cutoffHz without
 * the correction, above it with the correction.
 */
export function butterworthLowPass(
	cutoffHz: number,
	sampleHz: number,
	opts?: { doublePassCorrection?: boolean }
): { b: [number, number, number]; a: [number, number, number]; effectiveCutoffHz: number } {
	checkCutoff(cutoffHz, sampleHz);
	const correct = opts?.doublePassCorrection ?? true;
	const warped = Math.tan((Math.PI * cutoffHz) / sampleHz);
	const k = correct ? warped / DOUBLE_PASS_CORRECTION : warped;
	const effectiveCutoffHz = correct ? (Math.atan(k) * sampleHz) / Math.PI : cutoffHz;
	const k2 = k * k;
	const norm = 1 + Math.SQRT2 * k + k2;
	const b0 = k2 / norm;
	return {
		b: [b0, 2 * b0, b0],
		a: [1, (2 * (k2 - 1)) / norm, (1 - Math.SQRT2 * k + k2) / norm],
		effectiveCutoffHz
	};
}

/** How filtfilt extends a signal before filtering, as scipy.signal.filtfilt's `padtype` (null = no extension). */
export type PadType = 'odd' | 'even' | 'constant' | null;

/**
 * Zero-phase filtering, the same computation as scipy.signal.filtfilt(b, a, x, padtype, padlen) with method 'pad'
 * (defaults padtype 'odd', padlen = 3·max(len(a), len(b))): extend x at both ends by `padLen` samples — 'odd':
 * point reflection about the end sample (2x₀ − x_k), 'even': mirror (x_k), 'constant': the end sample, null or
 * padLen 0: none — run lfilter (transposed direct form II) forward with initial state lfilter_zi·(first extended
 * sample), run it backward over the result with initial state lfilter_zi·(last forward output), and keep the
 * middle. The signal needs more than padLen samples (as scipy's). The extensions are generated on the fly, so
 * `out` may be `x` itself.
 */
export function filtfilt(
	b: ArrayLike<number>,
	a: ArrayLike<number>,
	x: Float64Array,
	out?: Float64Array,
	opts?: { padType?: PadType; padLen?: number }
): Float64Array {
	const m = Math.max(a.length, b.length);
	if (a.length === 0 || b.length === 0 || a[0] === 0 || !Number.isFinite(a[0])) {
		throw new SignalError('invalid-coefficients', 'Filter coefficients need at least one b and one a value, with a[0] non-zero.');
	}
	const n = x.length;
	const padType = opts?.padType === undefined ? 'odd' : opts.padType;
	const padLen = opts?.padLen ?? 3 * m;
	if (!Number.isInteger(padLen) || padLen < 0) {
		throw new SignalError('invalid-argument', `The padding length must be a whole number of samples (0 or more); got ${padLen}.`);
	}
	const edge = padType === null ? 0 : padLen;
	if (n <= edge || n === 0) {
		throw new SignalError(
			'too-few-samples',
			`The signal has ${n} sample${n === 1 ? '' : 's'}; zero-lag filtering needs at least ${edge + 1}${edge ? ` (it pads ${edge} samples at each end)` : ''}.`
		);
	}
	for (let i = 0; i < n; i++) {
		if (!Number.isFinite(x[i])) {
			throw new SignalError(
				'missing-samples',
				`Sample ${i + 1} of ${n} is missing or not a number; fill the gaps (or trim the recording) before filtering.`
			);
		}
	}
	const y = out ?? new Float64Array(n);
	if (y.length !== n) throw new SignalError('invalid-argument', `The output array has ${y.length} samples; the signal has ${n}.`);

	// Normalised coefficients, zero-padded to the same length m (as lfilter does).
	const bn = new Float64Array(m);
	const an = new Float64Array(m);
	for (let k = 0; k < b.length; k++) bn[k] = b[k] / a[0];
	for (let k = 0; k < a.length; k++) an[k] = a[k] / a[0];

	// lfilter_zi: the state of a unit-step steady state, solved in closed form (the explicit formulas noted in scipy's source).
	const nz = m - 1;
	const zi = new Float64Array(nz);
	if (nz > 0) {
		let sumA = 0,
			sumB = 0;
		for (let k = 0; k < m; k++) sumA += an[k];
		for (let k = 1; k < m; k++) sumB += bn[k] - an[k] * bn[0];
		if (sumA === 0 || !Number.isFinite(sumA)) {
			throw new SignalError(
				'invalid-coefficients',
				'The filter has a pole at z = 1 (the a coefficients sum to zero); it has no steady state.'
			);
		}
		zi[0] = sumB / sumA;
		let asum = 1,
			csum = 0;
		for (let k = 1; k < nz; k++) {
			asum += an[k];
			csum += bn[k] - an[k] * bn[0];
			zi[k] = asum * zi[0] - csum;
		}
	}

	// Extensions, taken before `y` (possibly x itself) is overwritten.
	const head = new Float64Array(edge);
	const tail = new Float64Array(edge);
	const x0 = x[0],
		xn = x[n - 1];
	for (let j = 0; j < edge; j++) {
		if (padType === 'odd') {
			head[j] = 2 * x0 - x[edge - j];
			tail[j] = 2 * xn - x[n - 2 - j];
		} else if (padType === 'even') {
			head[j] = x[edge - j];
			tail[j] = x[n - 2 - j];
		} else {
			head[j] = x0;
			tail[j] = xn;
		}
	}
	const tailOut = new Float64Array(edge);
	const z = new Float64Array(Math.max(nz, 1));
	const b0 = bn[0];

	// One lfilter step in transposed direct form II; z holds the delayed state.
	const step = (v: number): number => {
		const out0 = b0 * v + (nz > 0 ? z[0] : 0);
		for (let k = 0; k < nz - 1; k++) z[k] = bn[k + 1] * v - an[k + 1] * out0 + z[k + 1];
		if (nz > 0) z[nz - 1] = bn[nz] * v - an[nz] * out0;
		return out0;
	};

	// Forward pass over [head, x, tail]; the head's outputs are not needed by the backward pass's kept part.
	for (let k = 0; k < nz; k++) z[k] = zi[k] * (edge ? head[0] : x0);
	for (let j = 0; j < edge; j++) step(head[j]);
	for (let i = 0; i < n; i++) y[i] = step(x[i]);
	for (let j = 0; j < edge; j++) tailOut[j] = step(tail[j]);

	// Backward pass from the end of the extended forward output.
	const last = edge ? tailOut[edge - 1] : y[n - 1];
	for (let k = 0; k < nz; k++) z[k] = zi[k] * last;
	for (let j = edge - 1; j >= 0; j--) step(tailOut[j]);
	for (let i = n - 1; i >= 0; i--) y[i] = step(y[i]);
	return y;
}

/** Second-order Butterworth run forward and backward, −3 dB at cutoffHz (double-pass correction applied). */
export function lowPassZeroLag(x: Float64Array, sampleHz: number, cutoffHz: number, out?: Float64Array): Float64Array {
	const { b, a } = butterworthLowPass(cutoffHz, sampleHz);
	if (x.length < MIN_SAMPLES_FOR_FILTER) {
		throw new SignalError(
			'too-few-samples',
			`The recording has ${x.length} sample${x.length === 1 ? '' : 's'}; low-pass filtering needs at least ${MIN_SAMPLES_FOR_FILTER}.`
		);
	}
	return filtfilt(b, a, x, out);
}

/**
 * Residual analysis for choosing a cutoff (after Winter 2009, §3.4.4.3 — the method as recalled, from memory).
 *
 * For each cutoff fc (default 1, 1.5, … up to min(25, 0.4·fs) Hz) the signal is filtered with lowPassZeroLag and
 * R(fc) = sqrt(mean((x − x̂_fc)²)). At cutoffs well above the movement's content the residual is almost all noise
 * and falls on a straight line; our choices:
 *  - the line is a least-squares fit of R against fc over the cutoffs in the upper half of the scanned range
 *    (fc ≥ (first + last) / 2), taken to be noise-dominated;
 *  - its intercept at fc = 0 estimates the noise RMS;
 *  - suggestedHz is the lowest cutoff where R(fc) falls to the intercept, found scanning upwards and interpolated
 *    linearly between the two neighbouring cutoffs. If R is at or below the intercept already at the first cutoff,
 *    that cutoff is returned; if it never falls that far, the last cutoff is returned.
 * Cutoffs must be strictly increasing, below Nyquist, with at least two in the upper half.
 */
export function residualAnalysis(
	x: Float64Array,
	sampleHz: number,
	opts?: { cutoffs?: number[] }
): { cutoffs: number[]; residuals: number[]; suggestedHz: number; noiseLine: { slope: number; intercept: number } } {
	checkSampleRate(sampleHz);
	let cutoffs: number[];
	if (opts?.cutoffs) {
		cutoffs = opts.cutoffs.slice();
	} else {
		const top = Math.min(25, 0.4 * sampleHz);
		cutoffs = [];
		for (let k = 0; 1 + 0.5 * k <= top + 1e-9; k++) cutoffs.push(1 + 0.5 * k);
	}
	for (let k = 1; k < cutoffs.length; k++) {
		if (!(cutoffs[k] > cutoffs[k - 1])) {
			throw new SignalError('invalid-argument', 'Residual analysis needs cutoff frequencies in increasing order.');
		}
	}
	const middle = cutoffs.length ? (cutoffs[0] + cutoffs[cutoffs.length - 1]) / 2 : 0;
	const fitted = cutoffs.filter((c) => c >= middle).length;
	if (cutoffs.length < 3 || fitted < 2) {
		throw new SignalError(
			'invalid-argument',
			`Residual analysis needs at least three cutoff frequencies (two in the upper half of the range); the sampling rate of ${sampleHz} Hz allows too few.`
		);
	}
	const n = x.length;
	const smooth = new Float64Array(n);
	const residuals: number[] = [];
	for (const fc of cutoffs) {
		lowPassZeroLag(x, sampleHz, fc, smooth);
		let s = 0;
		for (let i = 0; i < n; i++) {
			const d = x[i] - smooth[i];
			s += d * d;
		}
		residuals.push(Math.sqrt(s / n));
	}

	// Least-squares line through the upper half, centred sums for accuracy.
	let mf = 0,
		mr = 0,
		count = 0;
	for (let k = 0; k < cutoffs.length; k++) {
		if (cutoffs[k] < middle) continue;
		mf += cutoffs[k];
		mr += residuals[k];
		count++;
	}
	mf /= count;
	mr /= count;
	let sff = 0,
		sfr = 0;
	for (let k = 0; k < cutoffs.length; k++) {
		if (cutoffs[k] < middle) continue;
		sff += (cutoffs[k] - mf) ** 2;
		sfr += (cutoffs[k] - mf) * (residuals[k] - mr);
	}
	const slope = sfr / sff;
	const intercept = mr - slope * mf;

	let suggestedHz = cutoffs[cutoffs.length - 1];
	for (let k = 0; k < cutoffs.length; k++) {
		if (residuals[k] <= intercept) {
			if (k === 0) suggestedHz = cutoffs[0];
			else {
				const t = (residuals[k - 1] - intercept) / (residuals[k - 1] - residuals[k]);
				suggestedHz = cutoffs[k - 1] + t * (cutoffs[k] - cutoffs[k - 1]);
			}
			break;
		}
	}
	return { cutoffs, residuals, suggestedHz, noiseLine: { slope, intercept } };
}

/**
 * First and second derivatives by finite differences with step dt: central differences inside,
 * v_i = (x_{i+1} − x_{i−1}) / (2dt), a_i = (x_{i+1} − 2x_i + x_{i−1}) / dt², and second-order one-sided
 * formulas at the ends, v_0 = (−3x_0 + 4x_1 − x_2) / (2dt), a_0 = (2x_0 − 5x_1 + 4x_2 − x_3) / dt² (mirrored at
 * the last sample). Needs at least 4 samples. NaN samples give NaN at and next to them.
 */
export function differentiate(
	x: Float64Array,
	dt: number,
	out?: { velocity?: Float64Array; acceleration?: Float64Array }
): { velocity: Float64Array; acceleration: Float64Array } {
	const n = x.length;
	if (!Number.isFinite(dt) || dt <= 0) {
		throw new SignalError('invalid-argument', `The sample interval must be a positive number of seconds; got ${dt}.`);
	}
	if (n < 4) {
		throw new SignalError('too-few-samples', `The signal has ${n} sample${n === 1 ? '' : 's'}; derivatives need at least 4.`);
	}
	const v = out?.velocity ?? new Float64Array(n);
	const acc = out?.acceleration ?? new Float64Array(n);
	if (v.length !== n || acc.length !== n) {
		throw new SignalError('invalid-argument', `The output arrays must have ${n} samples, like the signal.`);
	}
	if (v === x || acc === x || v === acc) {
		throw new SignalError('invalid-argument', 'Velocity, acceleration and the signal must be three different arrays.');
	}
	const h2 = 2 * dt,
		hh = dt * dt;
	for (let i = 1; i < n - 1; i++) {
		v[i] = (x[i + 1] - x[i - 1]) / h2;
		acc[i] = (x[i + 1] - 2 * x[i] + x[i - 1]) / hh;
	}
	const l = n - 1;
	v[0] = (-3 * x[0] + 4 * x[1] - x[2]) / h2;
	v[l] = (3 * x[l] - 4 * x[l - 1] + x[l - 2]) / h2;
	acc[0] = (2 * x[0] - 5 * x[1] + 4 * x[2] - x[3]) / hh;
	acc[l] = (2 * x[l] - 5 * x[l - 1] + 4 * x[l - 2] - x[l - 3]) / hh;
	return { velocity: v, acceleration: acc };
}

/** Longest run of missing samples that gap filling bridges unless told otherwise (the parse's and the pipeline's default). */
export const DEFAULT_MAX_GAP_SAMPLES = 10;

/**
 * The gap rule, the one place it is written: a run of missing samples at 0-based `start`, `length` samples long,
 * in a signal of `n` samples, can be bridged when it touches neither end (there are valid samples to interpolate
 * from on both sides) and is at most maxGapSamples long. fillGaps fills exactly these runs; the recording checks
 * report the others.
 */
export function gapBridgeable(start: number, length: number, n: number, maxGapSamples: number): boolean {
	return start > 0 && start + length < n && length <= maxGapSamples;
}

/**
 * Fills runs of missing samples (NaN) of at most maxGapSamples by a local cubic: the interpolating polynomial
 * through the two valid samples on each side of the run (indices s−2, s−1, e+1, e+2 for a run s..e), evaluated at
 * the missing indices. Only samples valid in the input are used, so filling does not depend on the order of the
 * runs; when a side has a single valid neighbour (the one beyond it is missing or outside the signal) the
 * polynomial drops to degree 2 or 1. Runs touching the first or last sample have nothing on one side and are not
 * extrapolated; they, and runs longer than maxGapSamples, are listed in tooLong and stay NaN.
 * `start` is the 0-based index of the first missing sample.
 */
export function fillGaps(
	x: Float64Array,
	maxGapSamples: number
): { filled: Float64Array; gaps: { start: number; length: number }[]; tooLong: { start: number; length: number }[] } {
	if (!Number.isInteger(maxGapSamples) || maxGapSamples < 0) {
		throw new SignalError(
			'invalid-argument',
			`The longest gap to fill must be a whole number of samples (0 or more); got ${maxGapSamples}.`
		);
	}
	const n = x.length;
	const filled = Float64Array.from(x);
	const gaps: { start: number; length: number }[] = [];
	const tooLong: { start: number; length: number }[] = [];
	const nodes = new Float64Array(4);
	const values = new Float64Array(4);
	let i = 0;
	while (i < n) {
		if (!Number.isNaN(x[i])) {
			i++;
			continue;
		}
		const s = i;
		while (i < n && Number.isNaN(x[i])) i++;
		const e = i - 1;
		const length = e - s + 1;
		if (!gapBridgeable(s, length, n, maxGapSamples)) {
			tooLong.push({ start: s, length });
			continue;
		}
		let m = 0;
		if (s >= 2 && !Number.isNaN(x[s - 2])) {
			nodes[m] = s - 2;
			values[m++] = x[s - 2];
		}
		nodes[m] = s - 1;
		values[m++] = x[s - 1];
		nodes[m] = e + 1;
		values[m++] = x[e + 1];
		if (e + 2 < n && !Number.isNaN(x[e + 2])) {
			nodes[m] = e + 2;
			values[m++] = x[e + 2];
		}
		for (let t = s; t <= e; t++) {
			let sum = 0;
			for (let j = 0; j < m; j++) {
				let w = values[j];
				for (let k = 0; k < m; k++) if (k !== j) w *= (t - nodes[k]) / (nodes[j] - nodes[k]);
				sum += w;
			}
			filled[t] = sum;
		}
		gaps.push({ start: s, length });
	}
	return { filled, gaps, tooLong };
}
