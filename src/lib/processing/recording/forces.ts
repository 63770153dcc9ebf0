// Force-plate channels in recordings: the channels a plate's columns give (our scheme `<plate>.force.x (N)` …,
// parsed by parseRecording like any other channel, so every message keeps its file, line and column), the plate's
// signals in the shape of forces/cop.ts (SI, plate axes, interleaved x y z), one file holding angles and forces
// split in two, and a separate force file checked against its angle recording (rate ratio, start, length).
import { DEFAULT_CONTACT_THRESHOLD_N, ForceError, forceRateRatio, type ForcePlate, type PlateSignals } from '../forces';
import { plateChannelParts } from './layout';
import { fmt } from './problems';
import type { ExpectedChannel, Problem, Recording } from './types';

const AXES = ['x', 'y', 'z'] as const;

/** The channel names of a plate, in the order forceChannels gives them. */
export function plateChannelNames(plate: Pick<ForcePlate, 'name' | 'output'>): string[] {
	const p = plate.name;
	const force = AXES.map((a) => `${p}.force.${a}`);
	return plate.output === 'forces-moments'
		? [...force, ...AXES.map((a) => `${p}.moment.${a}`)]
		: [...force, ...AXES.map((a) => `${p}.cop.${a}`), `${p}.freemoment`];
}

/** What a plate's output needs, for the message of a missing column. */
function needOf(plate: Pick<ForcePlate, 'name' | 'output'>): string {
	const p = plate.name;
	return plate.output === 'forces-moments'
		? `a forces-moments plate needs ${p}.force.x, .y, .z (N) and ${p}.moment.x, .y, .z (N·m, about its measuring origin), all in the plate's axes`
		: `a forces-cop plate needs ${p}.force.x, .y, .z (N), ${p}.cop.x, .y, .z (m) and ${p}.freemoment (N·m), all in the plate's axes`;
}

export interface ForceChannelOptions {
	/**
	 * Contact threshold (N) on the plate's normal force (|force.z|, plate axes): below it a forces-cop plate's CoP and
	 * free moment cells may be empty (the plate is unloaded); default DEFAULT_CONTACT_THRESHOLD_N (20 N). Use the
	 * run's threshold.
	 */
	thresholdN?: number;
}

/**
 * The expected channels of one plate, for parseRecording (alone for a force file, or after the angle channels for
 * one file holding both): force x y z (N) and, for a forces-moments plate, moment x y z (N·m); for a forces-cop
 * plate, cop x y z (m; all three are required, though z is not used — the CoP is taken on the top surface) and
 * the free moment (N·m). Every one is required and never gap-filled: an empty or NaN cell is refused with its line
 * and column, except a forces-cop plate's CoP and free moment on lines where |force.z| is below the threshold.
 */
export function forceChannels(plate: Pick<ForcePlate, 'name' | 'output'>, opts: ForceChannelOptions = {}): ExpectedChannel[] {
	const thresholdN = opts.thresholdN ?? DEFAULT_CONTACT_THRESHOLD_N;
	const need = needOf(plate);
	const normal = `${plate.name}.force.z`;
	return plateChannelNames(plate).map((name) => {
		const q = plateChannelParts(name)!.quantity;
		const kind = q === 'force' ? 'force' : q === 'cop' ? 'length' : 'moment';
		return q === 'cop' || q === 'freemoment'
			? { name, kind, need, blankWhenUnloaded: { channel: normal, thresholdN } }
			: { name, kind, need };
	});
}

/** Several plates' channels, one plate after the other. */
export const forceChannelsOf = (plates: readonly Pick<ForcePlate, 'name' | 'output'>[], opts?: ForceChannelOptions): ExpectedChannel[] =>
	plates.flatMap((p) => forceChannels(p, opts));

function channel(recording: Recording, name: string, plate: Pick<ForcePlate, 'name' | 'output'>): Float64Array {
	const c = recording.channels.find((ch) => ch.name === name);
	if (!c) throw new ForceError('missing-channel', `${name} is missing: ${needOf(plate)}.`);
	return c.values;
}

function interleave(recording: Recording, names: string[], plate: Pick<ForcePlate, 'name' | 'output'>): Float64Array {
	const [a, b, c] = names.map((n) => channel(recording, n, plate));
	const n = a.length;
	const out = new Float64Array(3 * n);
	for (let i = 0; i < n; i++) {
		out[3 * i] = a[i];
		out[3 * i + 1] = b[i];
		out[3 * i + 2] = c[i];
	}
	return out;
}

/**
 * Each plate's signals from a parsed recording (kept values, SI, plate axes), keyed by plate name, in the shape
 * forces/cop.ts takes: `force` and `moment` (forces-moments) or `force`, `cop` and `freeMoment` (forces-cop),
 * interleaved x y z per sample. A CoP or free moment left empty while unloaded stays NaN (copToMoments accepts it
 * there). A channel the recording lacks throws ForceError('missing-channel') naming it and what the plate needs.
 */
export function plateSignalsOf(recording: Recording, plates: readonly ForcePlate[]): Map<string, PlateSignals> {
	const out = new Map<string, PlateSignals>();
	const vector = (plate: ForcePlate, q: 'force' | 'moment' | 'cop') =>
		interleave(
			recording,
			AXES.map((a) => `${plate.name}.${q}.${a}`),
			plate
		);
	for (const plate of plates) {
		const force = vector(plate, 'force');
		out.set(
			plate.name,
			plate.output === 'forces-moments'
				? { force, moment: vector(plate, 'moment') }
				: { force, cop: vector(plate, 'cop'), freeMoment: channel(recording, `${plate.name}.freemoment`, plate) }
		);
	}
	return out;
}

/**
 * One file holding angles and plate columns (same rate), parsed once with the angle channels followed by
 * forceChannelsOf(plates): the angle recording (the plates' channels taken out, everything else shared) and each
 * plate's signals (plateSignalsOf).
 */
export function splitAngleAndForce(
	recording: Recording,
	plates: readonly ForcePlate[]
): { angles: Recording; plates: Map<string, PlateSignals> } {
	const names = new Set(plates.flatMap((p) => plateChannelNames(p)));
	return {
		angles: { ...recording, channels: recording.channels.filter((c) => !names.has(c.name)) },
		plates: plateSignalsOf(recording, plates)
	};
}

/** A force recording paired with its angle recording. */
export interface ForcePairing {
	/** k: force samples per angle sample (forceHz = k · angleHz). */
	ratio: number;
	/** The angle recording's rate (Hz). */
	angleHz: number;
	/** k · angleHz: the force rate to pass to the resampling (forces/resample.ts), exact multiple of angleHz. */
	forceHz: number;
	/**
	 * The force recording cut to the samples the angle samples use (at most angleSamples · k; views of the parsed
	 * arrays, nothing copied): force sample j·k falls on angle sample j.
	 */
	force: Recording;
}

/**
 * Checks a force recording (its own file, parsed by parseRecording with forceChannelsOf(plates) as the expected
 * channels) against the angle recording of the same trial, and pairs them: the force rate must be a whole multiple
 * k of the angle rate (forceRateRatio; the measured rates may differ from it by the rounding of the printed times
 * as long as force sample j·k stays within half a force sample of angle sample j to the end), the two must start
 * within half a force sample of each other, and the force samples must reach the last angle sample. Every
 * problem names both files; the pairing changes neither recording.
 */
export function pairForceRecording(
	angle: Recording,
	force: Recording,
	fileNames: { angle: string; force: string }
): { ok: true; pairing: ForcePairing } | { ok: false; problems: Problem[] } {
	const A = `"${fileNames.angle}"`;
	const F = `"${fileNames.force}"`;
	const refuse = (code: string, message: string, field?: string): { ok: false; problems: Problem[] } => ({
		ok: false,
		problems: [{ file: fileNames.force, code, message, severity: 'error', ...(field ? { field } : {}) }]
	});
	const nA = angle.time.length;
	const nF = force.time.length;
	const r = force.sampleHz / angle.sampleHz;
	const k = Math.round(r);
	const half = 0.5 / (k * angle.sampleHz);
	// start: force sample 0 must fall on angle sample 0
	const start = force.time[0] - angle.time[0];
	const rateMessage = () => {
		try {
			forceRateRatio(force.sampleHz, angle.sampleHz);
			return null;
		} catch (e) {
			if (e instanceof ForceError) return e.message;
			throw e;
		}
	};
	// rate: over the angle samples, force sample j·k drifts from angle sample j by (nA − 1)·|k − r| force samples
	if (!(k >= 1) || Math.abs(k - r) * (nA - 1) > 0.5) {
		return refuse(
			'force-rate-ratio',
			`The force file ${F} and the angle file ${A} cannot be paired: ${rateMessage() ?? `the ratio is ${fmt(r)}`}`
		);
	}
	if (Math.abs(start) > half + 1e-12) {
		return refuse(
			'force-start',
			`The force file ${F} starts at ${fmt(force.time[0], 8)} s and the angle file ${A} at ${fmt(angle.time[0], 8)} s: ` +
				`${fmt(Math.abs(start) * 1000, 6)} ms apart, more than half a force sample (${fmt(half * 1000, 6)} ms at ${fmt(k * angle.sampleHz, 6)} Hz). ` +
				`Export both from the same start of the trial (the same first time), or cut the earlier one.`
		);
	}
	const needed = (nA - 1) * k + 1;
	if (nF < needed) {
		return refuse(
			'force-too-short',
			`The force file ${F} has ${nF} samples (${fmt(force.time[0], 8)} to ${fmt(force.time[nF - 1], 8)} s at ${fmt(force.sampleHz, 6)} Hz), ` +
				`but the ${nA} samples of the angle file ${A} (to ${fmt(angle.time[nA - 1], 8)} s) need ${needed} force samples at ${k} per angle sample. ` +
				`Export the forces over the whole trial.`
		);
	}
	// and by the times themselves: the last angle sample must still meet its force sample (within half a force sample)
	const drift = force.time[(nA - 1) * k] - angle.time[nA - 1];
	if (Math.abs(drift) > half + 1e-12) {
		const why = rateMessage();
		return refuse(
			'force-rate-ratio',
			why
				? `The force file ${F} and the angle file ${A} cannot be paired: ${why}`
				: `The force file ${F} (${fmt(force.sampleHz, 8)} Hz) and the angle file ${A} (${fmt(angle.sampleHz, 8)} Hz) drift apart: ` +
						`force sample ${(nA - 1) * k + 1} is at ${fmt(force.time[(nA - 1) * k], 8)} s but the last angle sample at ${fmt(angle.time[nA - 1], 8)} s. ` +
						`Forces must be recorded at exactly the angle rate or a whole multiple of it.`
		);
	}
	const m = Math.min(nF, nA * k);
	const cut: Recording = {
		...force,
		time: force.time.subarray(0, m),
		channels: force.channels.map((c) => ({ name: c.name, values: c.values.subarray(0, m) }))
	};
	return { ok: true, pairing: { ratio: k, angleHz: angle.sampleHz, forceHz: k * angle.sampleHz, force: cut } };
}
