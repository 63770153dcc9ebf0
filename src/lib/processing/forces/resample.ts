// Forces sampled at a whole multiple k of the angle rate, brought to the angle rate: zero-lag low-pass Butterworth
// (the filter of signal.ts, end treatment of edges.ts), then every k-th sample, aligned with the angle samples.
//
// Pure TypeScript over Float64Array; one scratch array per call. Method and reasons: docs/processing.md ("Force plates").
import { smoothWithEnds, type EndTreatment } from '../edges';
import { SignalError } from '../signal';
import { copToMoments, ForceError, plateToLab, type LabLoads, type PlateSignals } from './cop';
import type { ForcePlate } from './plate';

/** A force rate is accepted when forceHz / angleHz is within this of a whole number. */
export const RATE_RATIO_TOLERANCE = 1e-6;
/** When forces are decimated, the cutoff is at most this share of the angle rate's Nyquist frequency (angleHz / 2). */
export const ANTI_ALIAS_SHARE = 0.4;

const show = (x: number) => String(Number(x.toPrecision(6)));

/** The whole number k = forceHz / angleHz, or a ForceError that says why not. */
export function forceRateRatio(forceHz: number, angleHz: number): number {
	for (const [what, hz] of [
		['force', forceHz],
		['angle', angleHz]
	] as const) {
		if (!Number.isFinite(hz) || hz <= 0) {
			throw new ForceError('invalid-argument', `The ${what} sampling rate must be a positive number of hertz; got ${hz}.`);
		}
	}
	const r = forceHz / angleHz;
	const k = Math.round(r);
	if (k < 1 || Math.abs(r - k) > RATE_RATIO_TOLERANCE) {
		throw new ForceError(
			'rate-ratio',
			`The forces are sampled at ${show(forceHz)} Hz and the angles at ${show(angleHz)} Hz: the ratio ${show(r)} is not a whole number ` +
				`(within ${RATE_RATIO_TOLERANCE}). Forces must be recorded at the angle rate or a whole multiple of it (e.g. 1000 Hz with 200 Hz angles).`
		);
	}
	return k;
}

/**
 * The cutoff (Hz) forces are filtered at before keeping every k-th sample: the run's cutoff, but at most
 * 0.4 × the angle rate's Nyquist frequency when k > 1 (so that what is kept holds nothing that would alias);
 * with no run cutoff (an unfiltered run) that limit itself when k > 1, and no filter when k = 1.
 */
export function forceCutoffHz(angleHz: number, ratio: number, runCutoffHz: number | null): number | null {
	if (ratio === 1) return runCutoffHz;
	const cap = ANTI_ALIAS_SHARE * (angleHz / 2);
	return runCutoffHz === null ? cap : Math.min(runCutoffHz, cap);
}

export interface ResampleOptions {
	forceHz: number;
	angleHz: number;
	/** The run's cutoff (Hz) or null for an unfiltered run; forceCutoffHz gives the one used. */
	cutoffHz: number | null;
	/** Samples wanted at the angle rate (the angle recording's length); default ⌈n / k⌉. */
	angleSamples?: number;
	/** How the force signal is continued beyond its ends before filtering; default 'reflect-9' (scipy.signal.filtfilt's defaults). */
	endTreatment?: EndTreatment;
	/** Names the channel in messages, e.g. "plate1.force.x". */
	label?: string;
}

function plan(n: number, opts: ResampleOptions): { k: number; m: number; cutoff: number | null } {
	const k = forceRateRatio(opts.forceHz, opts.angleHz);
	const m = opts.angleSamples ?? Math.ceil(n / k);
	if (!Number.isInteger(m) || m < 1) {
		throw new ForceError('invalid-argument', `The number of angle samples must be a whole number of 1 or more; got ${m}.`);
	}
	if (n < (m - 1) * k + 1 || n > m * k) {
		throw new ForceError(
			'length-mismatch',
			`${opts.label ? `${opts.label}: ` : ''}${n} force samples at ${show(opts.forceHz)} Hz do not cover ${m} angle samples at ${show(opts.angleHz)} Hz ` +
				`(${m} angle samples need ${(m - 1) * k + 1} to ${m * k} force samples at ${k}× the rate).`
		);
	}
	return { k, m, cutoff: forceCutoffHz(opts.angleHz, k, opts.cutoffHz) };
}

function filterInto(x: Float64Array, y: Float64Array, cutoff: number | null, opts: ResampleOptions): void {
	if (cutoff === null) {
		if (y !== x) y.set(x);
		return;
	}
	try {
		smoothWithEnds(x, opts.forceHz, cutoff, opts.endTreatment ?? 'reflect-9', y);
	} catch (e) {
		if (e instanceof SignalError && opts.label) throw new SignalError(e.code, `${opts.label}: ${e.message}`);
		throw e;
	}
}

/**
 * One force channel at the angle rate: low-pass filtered (zero-lag second-order Butterworth, −3 dB at
 * forceCutoffHz) at the force rate, then sample j·k for j = 0 … m − 1 (force sample 0 is taken at the time of
 * angle sample 0). NaN samples are refused by the filter with their index (fill or refuse them first).
 */
export function resampleChannel(x: Float64Array, opts: ResampleOptions, out?: Float64Array): Float64Array {
	const { k, m, cutoff } = plan(x.length, opts);
	const y = out ?? new Float64Array(m);
	if (y.length !== m) throw new ForceError('length-mismatch', `The output array has ${y.length} samples; ${m} are wanted.`);
	const scratch = cutoff === null ? x : new Float64Array(x.length);
	filterInto(x, scratch, cutoff, opts);
	for (let j = 0; j < m; j++) y[j] = scratch[j * k];
	return y;
}

/** The same for interleaved vectors (x y z per sample): each component filtered alone, then every k-th sample kept. */
export function resampleVectors(x3: Float64Array, opts: ResampleOptions, out?: Float64Array): Float64Array {
	if (x3.length % 3 !== 0)
		throw new ForceError('length-mismatch', `The vector array holds ${x3.length} values, not a whole number of x y z samples.`);
	const n = x3.length / 3;
	const { k, m, cutoff } = plan(n, opts);
	const y = out ?? new Float64Array(3 * m);
	if (y.length !== 3 * m) throw new ForceError('length-mismatch', `The output array has ${y.length / 3} samples; ${m} are wanted.`);
	const a = new Float64Array(n);
	const b = cutoff === null ? a : new Float64Array(n);
	for (let c = 0; c < 3; c++) {
		for (let i = 0; i < n; i++) a[i] = x3[3 * i + c];
		filterInto(a, b, cutoff, { ...opts, label: opts.label ? `${opts.label}.${'xyz'[c]}` : undefined });
		for (let j = 0; j < m; j++) y[3 * j + c] = b[j * k];
	}
	return y;
}

/**
 * A plate's measured signals at the angle rate, always as force and moment about the measuring origin (plate
 * axes): a forces-cop plate's CoP and free moment are first turned into moments (copToMoments), then force and moment
 * channels are filtered and decimated. Pass the result to plateToLab(plate, it, { output: 'forces-moments' }) (or use
 * plateLoadsAtAngleRate). The CoP is computed from the filtered force and moment, never filtered itself: near the
 * contact threshold the division by Fz swings wildly (and a plate's CoP output is meaningless while unloaded), and a
 * filter would smear that into the loaded samples, whereas the moments go smoothly to zero with the force.
 */
export function resamplePlateSignals(
	plate: ForcePlate,
	signals: PlateSignals,
	opts: ResampleOptions & { thresholdN?: number }
): { force: Float64Array; moment: Float64Array } {
	const label = opts.label ?? plate.name;
	const moment = plate.output === 'forces-moments' ? signals.moment : copToMoments(plate, signals, { thresholdN: opts.thresholdN, label });
	if (!moment) throw new ForceError('missing-channel', `${label}: the plate outputs forces and moments, but the recording has no moments.`);
	return {
		force: resampleVectors(signals.force, { ...opts, label: `${label}.force` }),
		moment: resampleVectors(moment, { ...opts, label: `${label}.moment` })
	};
}

/** Loads on the person in lab axes at the angle rate: resamplePlateSignals, then plateToLab. */
export function plateLoadsAtAngleRate(plate: ForcePlate, signals: PlateSignals, opts: ResampleOptions & { thresholdN?: number }): LabLoads {
	const resampled = resamplePlateSignals(plate, signals, opts);
	return plateToLab(plate, resampled, { thresholdN: opts.thresholdN, output: 'forces-moments' });
}
