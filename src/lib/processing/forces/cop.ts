// From what a force plate measures (in its own axes) to the loads on the person in lab axes, and back.
//
// Pure TypeScript over interleaved Float64Array (x y z per sample); one pass per call, nothing allocated per sample.
// Formulas and sign rules: docs/processing.md ("Force plates").
import type { Vec3 } from '../../dynamics/model';
import { plateOrigin, type ForcePlate, type PlateOutput } from './plate';

/** Below this normal force (N) a plate is unloaded and its CoP undefined (common practice). */
export const DEFAULT_CONTACT_THRESHOLD_N = 20;

/** Bad input to the force routines; `message` is written to be shown as is. */
export class ForceError extends Error {
	constructor(
		public readonly code: 'invalid-argument' | 'missing-channel' | 'length-mismatch' | 'rate-ratio',
		message: string
	) {
		super(message);
		this.name = 'ForceError';
	}
}

/**
 * A plate's signals as it measures them, in the plate's axes: the load the person applies TO the plate.
 * `force` (N) always; `moment` (N·m, about the measuring origin) for a forces-moments plate; `cop` (m, plate axes
 * from the measuring origin; its z is not used, the point is taken on the top surface z = −originDepthM) and
 * `freeMoment` (N·m, one value per sample, about the plate z axis) for a forces-cop plate.
 * Vectors are interleaved x y z per sample.
 */
export interface PlateSignals {
	force: Float64Array;
	moment?: Float64Array;
	cop?: Float64Array;
	freeMoment?: Float64Array;
}

/** Loads on the person in lab axes, interleaved x y z per sample. */
export interface LabLoads {
	/** Ground reaction force on the person (N). */
	grf: Float64Array;
	/** Centre of pressure on the top surface (m, lab); NaN where the plate is unloaded. */
	cop: Float64Array;
	/** Free moment on the person about the surface normal, as a lab vector (N·m); 0 where the plate is unloaded. */
	freeMoment: Float64Array;
	/** 1 where |normal force| ≥ threshold, else 0. */
	loaded: Uint8Array;
}

function samplesOf(name: string, a: Float64Array | undefined, n: number | null, perSample: number): number {
	if (!a) throw new ForceError('missing-channel', `The plate signals have no ${name}.`);
	if (a.length % perSample !== 0) {
		throw new ForceError('length-mismatch', `The ${name} array holds ${a.length} values, not a whole number of samples of ${perSample}.`);
	}
	const m = a.length / perSample;
	if (n !== null && m !== n) throw new ForceError('length-mismatch', `The ${name} has ${m} samples; the force has ${n}.`);
	return m;
}

/** The contact threshold to use (default DEFAULT_CONTACT_THRESHOLD_N), refused unless a force of 0 N or more. */
function thresholdOf(given: number | undefined): number {
	const thresholdN = given ?? DEFAULT_CONTACT_THRESHOLD_N;
	if (!Number.isFinite(thresholdN) || thresholdN < 0) {
		throw new ForceError('invalid-argument', `The contact threshold must be a force of 0 N or more; got ${thresholdN}.`);
	}
	return thresholdN;
}

/**
 * Loads on the person in lab axes from a plate's measured signals (plate axes), per sample:
 *  - GRF on the person: F_lab = −R·F (R = plate.axes, F the measured force).
 *  - CoP, plate axes, on the top surface z = −d (d = originDepthM), for a forces-moments plate from M = r × F + T_free:
 *      x = (−My − d·Fx) / Fz,  y = (Mx − d·Fy) / Fz;
 *    for a forces-cop plate as given. In the lab: CoP_lab = origin + R·(x, y, −d), origin = centre + d·ẑ.
 *  - Free moment: T = Mz − x·Fy + y·Fx (forces-moments) or as given (forces-cop), about the plate z axis, applied to
 *    the plate; on the person in the lab −T·ẑ (ẑ the plate z axis in lab axes).
 * Unloaded where |Fz| < thresholdN: CoP NaN, free moment 0 (the GRF is still given).
 */
export function plateToLab(
	plate: ForcePlate,
	signals: PlateSignals,
	opts?: { thresholdN?: number; out?: LabLoads; output?: PlateOutput }
): LabLoads {
	const threshold = thresholdOf(opts?.thresholdN);
	const output = opts?.output ?? plate.output;
	const n = samplesOf('force', signals.force, null, 3);
	if (output === 'forces-moments') samplesOf('moment', signals.moment, n, 3);
	else {
		samplesOf('centre of pressure', signals.cop, n, 3);
		samplesOf('free moment', signals.freeMoment, n, 1);
	}
	const out = opts?.out ?? {
		grf: new Float64Array(3 * n),
		cop: new Float64Array(3 * n),
		freeMoment: new Float64Array(3 * n),
		loaded: new Uint8Array(n)
	};
	if (out.grf.length !== 3 * n || out.cop.length !== 3 * n || out.freeMoment.length !== 3 * n || out.loaded.length !== n) {
		throw new ForceError('length-mismatch', `The output arrays must hold ${n} samples, like the force.`);
	}
	const R = plate.axes;
	const r00 = R[0][0],
		r01 = R[0][1],
		r02 = R[0][2],
		r10 = R[1][0],
		r11 = R[1][1],
		r12 = R[1][2],
		r20 = R[2][0],
		r21 = R[2][1],
		r22 = R[2][2];
	const d = plate.originDepthM;
	const [ox, oy, oz] = plateOrigin(plate);
	const F = signals.force,
		M = signals.moment,
		P = signals.cop,
		T = signals.freeMoment;
	const { grf, cop, freeMoment, loaded } = out;
	for (let i = 0; i < n; i++) {
		const j = 3 * i;
		const fx = F[j],
			fy = F[j + 1],
			fz = F[j + 2];
		grf[j] = -(r00 * fx + r01 * fy + r02 * fz);
		grf[j + 1] = -(r10 * fx + r11 * fy + r12 * fz);
		grf[j + 2] = -(r20 * fx + r21 * fy + r22 * fz);
		if (!(Math.abs(fz) >= threshold)) {
			loaded[i] = 0;
			cop[j] = cop[j + 1] = cop[j + 2] = NaN;
			freeMoment[j] = freeMoment[j + 1] = freeMoment[j + 2] = 0;
			continue;
		}
		loaded[i] = 1;
		let x: number, y: number, t: number;
		if (output === 'forces-moments') {
			const m = M as Float64Array;
			x = (-m[j + 1] - d * fx) / fz;
			y = (m[j] - d * fy) / fz;
			t = m[j + 2] - x * fy + y * fx;
		} else {
			x = (P as Float64Array)[j];
			y = (P as Float64Array)[j + 1];
			t = (T as Float64Array)[i];
		}
		cop[j] = ox + r00 * x + r01 * y - r02 * d;
		cop[j + 1] = oy + r10 * x + r11 * y - r12 * d;
		cop[j + 2] = oz + r20 * x + r21 * y - r22 * d;
		freeMoment[j] = -t * r02;
		freeMoment[j + 1] = -t * r12;
		freeMoment[j + 2] = -t * r22;
	}
	return out;
}

/**
 * The moments about the measuring origin (plate axes, N·m, interleaved) equivalent to a forces-cop plate's CoP and
 * free moment: M = r × F + (0, 0, T) with r = (x, y, −d). Where the CoP is missing (NaN) on an unloaded sample
 * (|Fz| < thresholdN) the surface centre is used; missing on a loaded sample is refused with its sample number.
 * `label` names the plate in messages.
 */
export function copToMoments(
	plate: ForcePlate,
	signals: PlateSignals,
	opts?: { thresholdN?: number; label?: string; out?: Float64Array }
): Float64Array {
	const threshold = thresholdOf(opts?.thresholdN);
	const n = samplesOf('force', signals.force, null, 3);
	samplesOf('centre of pressure', signals.cop, n, 3);
	samplesOf('free moment', signals.freeMoment, n, 1);
	const moment = opts?.out ?? new Float64Array(3 * n);
	if (moment.length !== 3 * n) throw new ForceError('length-mismatch', `The output array must hold ${n} samples, like the force.`);
	const F = signals.force,
		P = signals.cop as Float64Array,
		T = signals.freeMoment as Float64Array;
	const d = plate.originDepthM;
	const who = opts?.label ?? plate.name;
	for (let i = 0; i < n; i++) {
		const j = 3 * i;
		const fx = F[j],
			fy = F[j + 1],
			fz = F[j + 2];
		let x = P[j],
			y = P[j + 1],
			t = T[i];
		if (!Number.isFinite(x) || !Number.isFinite(y) || !Number.isFinite(t)) {
			if (Math.abs(fz) >= threshold) {
				throw new ForceError(
					'invalid-argument',
					`${who}: sample ${i + 1} of ${n} has no centre of pressure or free moment while the plate is loaded (|Fz| = ${Math.abs(fz).toFixed(1)} N ≥ ${threshold} N).`
				);
			}
			x = y = t = 0;
		}
		moment[j] = y * fz + d * fy;
		moment[j + 1] = -d * fx - x * fz;
		moment[j + 2] = x * fy - y * fx + t;
	}
	return moment;
}

/**
 * The inverse of plateToLab: the signals a plate would record (its axes, the load applied TO it) for a given GRF on
 * the person, CoP and free moment in lab axes, for either output. Used by simulations and tests to write plate
 * columns. The CoP is projected along the normal onto the top surface; the component of the free moment along the
 * normal is kept (the rest is not a free moment a plate can sense). Where the CoP is NaN (unloaded) the surface
 * centre is used, so every written value is finite: cop (0, 0, −d) and the moments of the force about it.
 * The CoP written for a forces-cop plate is in plate axes from the measuring origin, with z = −d.
 */
export function labToPlate(
	plate: ForcePlate,
	lab: { grf: Float64Array; cop: Float64Array; freeMoment: Float64Array },
	output: PlateOutput = plate.output
): PlateSignals {
	const n = samplesOf('GRF', lab.grf, null, 3);
	samplesOf('centre of pressure', lab.cop, n, 3);
	samplesOf('free moment', lab.freeMoment, n, 3);
	const R = plate.axes;
	const d = plate.originDepthM;
	const [ox, oy, oz] = plateOrigin(plate);
	const force = new Float64Array(3 * n);
	const moment = output === 'forces-moments' ? new Float64Array(3 * n) : undefined;
	const cop = output === 'forces-cop' ? new Float64Array(3 * n) : undefined;
	const freeMoment = output === 'forces-cop' ? new Float64Array(n) : undefined;
	const G = lab.grf,
		C = lab.cop,
		T = lab.freeMoment;
	for (let i = 0; i < n; i++) {
		const j = 3 * i;
		// measured force = −Rᵀ·GRF
		const gx = G[j],
			gy = G[j + 1],
			gz = G[j + 2];
		const fx = -(R[0][0] * gx + R[1][0] * gy + R[2][0] * gz);
		const fy = -(R[0][1] * gx + R[1][1] * gy + R[2][1] * gz);
		const fz = -(R[0][2] * gx + R[1][2] * gy + R[2][2] * gz);
		force[j] = fx;
		force[j + 1] = fy;
		force[j + 2] = fz;
		let x = 0,
			y = 0;
		if (!Number.isNaN(C[j]) && !Number.isNaN(C[j + 1]) && !Number.isNaN(C[j + 2])) {
			const px = C[j] - ox,
				py = C[j + 1] - oy,
				pz = C[j + 2] - oz;
			x = R[0][0] * px + R[1][0] * py + R[2][0] * pz;
			y = R[0][1] * px + R[1][1] * py + R[2][1] * pz;
		}
		// free moment applied to the plate about its z axis: −(T_person · ẑ)
		const t = -(R[0][2] * T[j] + R[1][2] * T[j + 1] + R[2][2] * T[j + 2]);
		if (moment) {
			// M = r × F + (0, 0, t), r = (x, y, −d)
			moment[j] = y * fz + d * fy;
			moment[j + 1] = -d * fx - x * fz;
			moment[j + 2] = x * fy - y * fx + t;
		} else {
			(cop as Float64Array)[j] = x;
			(cop as Float64Array)[j + 1] = y;
			(cop as Float64Array)[j + 2] = -d;
			(freeMoment as Float64Array)[i] = t;
		}
	}
	return output === 'forces-moments' ? { force, moment } : { force, cop, freeMoment };
}

/**
 * 1 where a lab force's component along `normalLab` has magnitude ≥ thresholdN, else 0. The default direction is
 * lab Y (vertical), which is the plate's normal for a plate in the floor; pass plateNormal(plate) for another.
 */
export function loadedMask(
	forceLab: Float64Array,
	thresholdN: number = DEFAULT_CONTACT_THRESHOLD_N,
	normalLab: Vec3 = [0, 1, 0],
	out?: Uint8Array
): Uint8Array {
	thresholdOf(thresholdN);
	const n = samplesOf('force', forceLab, null, 3);
	const mask = out ?? new Uint8Array(n);
	if (mask.length !== n) throw new ForceError('length-mismatch', `The output mask must hold ${n} samples, like the force.`);
	const [a, b, c] = normalLab;
	for (let i = 0; i < n; i++) {
		const j = 3 * i;
		mask[i] = Math.abs(a * forceLab[j] + b * forceLab[j + 1] + c * forceLab[j + 2]) >= thresholdN ? 1 : 0;
	}
	return mask;
}
