// A simulated walking trial with known joint moments and known ground reaction forces: both legs on a moving pelvis, the
// leg angles from the feet's paths (stance: the ankle held over its footprint; swing: a minimum-jerk step with a lift),
// forward-simulated under the tracking law of simulate-recording.ts with a known GRF, free moment and moving CoP on each
// foot that lands on a force plate; the plates' signals written at a whole multiple of the angle rate, in plate axes.
// Used by the round-trip tests and the demo. Pure TypeScript, no I/O.
import type { Vec3 } from '../dynamics/index';
import type { ParticipantBody } from '../anthropometry/scale';
import { tables, type SegmentTableId } from '../anthropometry/tables';
import { labToPlate, type ForcePlate, type PlateSignals } from './forces/index';
import { buildSessionModel, cardanXYZ, type SessionSetupInput } from './session-model';
import { recordingCsv, simulateRecording, torquesCsv, type SimulatedRecording, type TargetPath } from './simulate-recording';

export interface WalkingSpec {
	name: string;
	body: ParticipantBody;
	/** Segment table; default 'dempster-winter-2009'. */
	table?: SegmentTableId;
	/** Distance between the hip joint centres (m); default 0.22 (our choice for the demo figure). */
	hipWidthM?: number;
	/** Walking speed (m/s), cycle time (s), stance share of the cycle; defaults 1.0, 1.1, 0.6. */
	speedMS?: number;
	cycleS?: number;
	stanceShare?: number;
	/** Trial length (s); default 3.6. */
	duration?: number;
	/** Angle rate (Hz) and the force rate's multiple of it; defaults 200 and 5 (1000 Hz forces). */
	angleHz?: number;
	forceRatio?: number;
	/**
	 * Which stance lands on which plate: the foot and the step number j (its j-th foot strike after the first of that
	 * foot, from 0); default right step 1 on plate1 and left step 1 on plate2. Every other stance lands off the plates
	 * and, in this simulation, carries no force (so that the known moments are what the plates let a run recover).
	 */
	steps?: { foot: 'left' | 'right'; step: number }[];
}

export interface WalkingTrial {
	spec: WalkingSpec;
	/** The session set-up (gait: both legs on the pelvis). */
	setup: SessionSetupInput;
	sim: SimulatedRecording;
	/** The plates (rotated about the vertical and offset in the lab; plate1 forces-moments, plate2 forces-cop). */
	plates: ForcePlate[];
	angleHz: number;
	forceHz: number;
	/** What each plate measures, plate axes, at forceHz (labToPlate of the known GRF). */
	signals: { plate: ForcePlate; signals: PlateSignals }[];
	/** The known loads on the person at forceHz, lab axes, interleaved; CoP NaN where no force. */
	lab: { plate: string; grf: Float64Array; cop: Float64Array; freeMoment: Float64Array }[];
	/** Time (s) of each force sample. */
	forceTime: Float64Array;
	/** Each loaded stance: plate, foot, first and last time with a force. */
	stances: { plate: string; foot: 'left' | 'right'; start: number; end: number }[];
	/** Angles file in our layout (°, m), force file in our column scheme, known moments (N·m). */
	anglesCsv: string;
	forcesCsv: string;
	torquesCsv: string;
}

const DEG = Math.PI / 180;
/** Lift of the ankle in swing: 256 u⁴ (1 − u)⁴ (1 at mid-swing), zero with its first three derivatives at both ends. */
const lift = (u: number) => 256 * u ** 4 * (1 - u) ** 4;
/**
 * The swing's forward travel, 0 → 1: 35u⁴ − 84u⁵ + 70u⁶ − 20u⁷, whose velocity, acceleration and jerk are zero at both
 * ends (a minimum-jerk step would leave the jerk jumping at foot off and strike, which the derivatives smear).
 */
const travel = (u: number) => u ** 4 * (35 - 84 * u + 70 * u ** 2 - 20 * u ** 3);

/** A plate 0.6 m × 0.4 m (long side along `long`), top at Y = 0, centred at (cx, cz), turned `deg` about the vertical. */
function floorPlate(
	name: string,
	cx: number,
	cz: number,
	deg: number,
	long: 'u' | 'v',
	depth: number,
	output: ForcePlate['output']
): ForcePlate {
	const g = deg * DEG;
	const u: Vec3 = [Math.cos(g), 0, Math.sin(g)],
		v: Vec3 = [-Math.sin(g), 0, Math.cos(g)]; // u × v = (0, −1, 0): into the floor
	const a = long === 'u' ? 0.3 : 0.2,
		b = long === 'u' ? 0.2 : 0.3;
	const at = (su: number, sv: number): Vec3 => [cx + su * a * u[0] + sv * b * v[0], 0, cz + su * a * u[2] + sv * b * v[2]];
	return {
		name,
		corners: [at(-1, -1), at(1, -1), at(1, 1), at(-1, 1)],
		axes: [
			[u[0], v[0], 0],
			[0, 0, -1],
			[u[2], v[2], 0]
		],
		originDepthM: depth,
		output
	};
}

/**
 * Simulates the walking trial. The pelvis moves forward at the speed with small vertical, lateral and rotational
 * oscillations; each leg's hip and knee flexion put the ankle where its path says (planar inverse kinematics in the
 * pelvis's sagittal plane), the ankle keeps the foot parallel to the pelvis; the other DOFs hold 0. On a stance that lands
 * on a plate the GRF (vertical two-humped, braking then propulsion, medial), a free moment and a CoP moving from the heel
 * towards the toe act on the foot.
 */
export function simulateWalkingTrial(spec: WalkingSpec): WalkingTrial {
	const v = spec.speedMS ?? 1.0,
		T = spec.cycleS ?? 1.1,
		beta = spec.stanceShare ?? 0.6,
		duration = spec.duration ?? 3.6,
		angleHz = spec.angleHz ?? 200,
		ratio = spec.forceRatio ?? 5;
	const forceHz = angleHz * ratio;
	const setup: SessionSetupInput = {
		table: spec.table ?? 'dempster-winter-2009',
		limbs: ['right.leg', 'left.leg'],
		pelvis: { hipWidthM: spec.hipWidthM ?? 0.22 }
	};
	const built = buildSessionModel(spec.body, setup);
	const len = (k: string) => built.parameters.segments.find((s) => s.key === k)!.length.value;
	const Lt = len('right.thigh'),
		Ls = len('right.shank'),
		Lf = len('right.foot');
	const w = built.pelvis!.hipWidthM;
	const ha = tables.drillis.lengths.footHeight.fraction.value * spec.body.stature; // ankle above the sole
	const W = built.bodyMass * 9.81;
	// pelvis height: the leg reaches 95 % of its length at strike and foot off (D ahead or behind), less the bob
	const D = (v * beta * T) / 2;
	const y0 = ha + Math.sqrt((0.95 * (Lt + Ls)) ** 2 - D ** 2) - 0.01;
	const x0 = 0;
	const first: Record<'left' | 'right', number> = { right: 0.3, left: 0.3 + T / 2 };
	const side = (f: 'left' | 'right') => (f === 'right' ? 1 : -1);
	/** Footprint j of a foot: the ankle's X (the pelvis passes over it at mid-stance) and Z. */
	const footprint = (f: 'left' | 'right', j: number) => ({ x: x0 + v * (first[f] + j * T + (beta * T) / 2), z: (side(f) * w) / 2 });

	const pelvisAt = (t: number) => {
		const c = (2 * Math.PI) / T;
		return {
			p: [x0 + v * t, y0 + 0.008 * Math.cos(2 * c * t), 0.01 * Math.sin(c * t)] as Vec3,
			r: [2 * DEG * Math.sin(c * t), 3 * DEG * Math.sin(c * t + 0.5), 1.5 * DEG * Math.sin(2 * c * t)] as Vec3
		};
	};
	const pelvisPath =
		(k: number): TargetPath =>
		(t) => {
			const c = (2 * Math.PI) / T;
			switch (k) {
				case 0:
					return [x0 + v * t, v, 0];
				case 1:
					return [y0 + 0.008 * Math.cos(2 * c * t), -0.016 * c * Math.sin(2 * c * t), -0.032 * c * c * Math.cos(2 * c * t)];
				case 2:
					return [0.01 * Math.sin(c * t), 0.01 * c * Math.cos(c * t), -0.01 * c * c * Math.sin(c * t)];
				case 3:
					return [2 * DEG * Math.sin(c * t), 2 * DEG * c * Math.cos(c * t), -2 * DEG * c * c * Math.sin(c * t)];
				case 4:
					return [3 * DEG * Math.sin(c * t + 0.5), 3 * DEG * c * Math.cos(c * t + 0.5), -3 * DEG * c * c * Math.sin(c * t + 0.5)];
				default:
					return [1.5 * DEG * Math.sin(2 * c * t), 3 * DEG * c * Math.cos(2 * c * t), -6 * DEG * c * c * Math.sin(2 * c * t)];
			}
		};
	/** The ankle's lab target at time t and whether the foot is in stance (with its step number and phase). */
	const ankleAt = (f: 'left' | 'right', t: number) => {
		const j = Math.floor((t - first[f]) / T);
		const s0 = first[f] + j * T;
		const here = footprint(f, j);
		if (t <= s0 + beta * T) return { x: here.x, y: ha, z: here.z, stance: { j, s: (t - s0) / (beta * T) } };
		const u = (t - s0 - beta * T) / ((1 - beta) * T);
		const next = footprint(f, j + 1);
		return { x: here.x + (next.x - here.x) * travel(u), y: ha + 0.06 * lift(u), z: here.z, stance: null };
	};
	/** Hip flexion, knee flexion, ankle dorsiflexion of a foot at time t (planar inverse kinematics in pelvis axes). */
	const legAngles = (f: 'left' | 'right', t: number): [number, number, number] => {
		const { p, r } = pelvisAt(t);
		const R = cardanXYZ(r[0], r[1], r[2]);
		const hz = (side(f) * w) / 2;
		const H = [p[0] + R[0][2] * hz, p[1] + R[1][2] * hz, p[2] + R[2][2] * hz];
		const A = ankleAt(f, t);
		const d = [A.x - H[0], A.y - H[1], A.z - H[2]];
		const dx = R[0][0] * d[0] + R[1][0] * d[1] + R[2][0] * d[2],
			dy = R[0][1] * d[0] + R[1][1] * d[1] + R[2][1] * d[2];
		const reach = Math.min(Math.hypot(dx, dy), 0.999 * (Lt + Ls));
		const knee = Math.acos(Math.max(-1, Math.min(1, (reach * reach - Lt * Lt - Ls * Ls) / (2 * Lt * Ls))));
		const hip = Math.atan2(dx, -dy) + Math.atan2(Ls * Math.sin(knee), Lt + Ls * Math.cos(knee));
		return [hip, knee, knee - hip];
	};
	// targets with derivatives by central differences of the inverse kinematics (h = 0.1 ms; rounding ~1e-8 rad/s²)
	const h = 1e-4;
	const legPath =
		(f: 'left' | 'right', k: number): TargetPath =>
		(t) => {
			const a = legAngles(f, t - h)[k],
				b = legAngles(f, t)[k],
				c = legAngles(f, t + h)[k];
			return [b, (c - a) / (2 * h), (c - 2 * b + a) / (h * h)];
		};
	const targets: Record<string, TargetPath> = {};
	['px', 'py', 'pz', 'rx', 'ry', 'rz'].forEach((dof, k) => (targets[`pelvis.${dof}`] = pelvisPath(k)));
	for (const f of ['right', 'left'] as const) {
		targets[`${f}.hip.flexion`] = legPath(f, 0);
		targets[`${f}.knee.flexion`] = legPath(f, 1);
		targets[`${f}.ankle.dorsiflexion`] = legPath(f, 2);
	}

	// plates under the chosen stances' footprints, the foot's length along the plate's long side
	const steps = spec.steps ?? [
		{ foot: 'right', step: 1 },
		{ foot: 'left', step: 1 }
	];
	const plates = steps.map((s, i) => {
		const fp = footprint(s.foot, s.step);
		const cx = fp.x + Lf / 2 - 0.03,
			cz = side(s.foot) * 0.2;
		return i % 2 === 0
			? floorPlate(`plate${i + 1}`, cx, cz, 10, 'u', 0.04, 'forces-moments')
			: floorPlate(`plate${i + 1}`, cx, cz, 95, 'v', 0.035, 'forces-cop');
	});
	/** The known GRF, free moment and CoP of a loaded stance at phase s (0…1) on footprint fp. */
	const grfAt = (f: 'left' | 'right', fp: { x: number; z: number }, s: number) => {
		const s1 = Math.sin(Math.PI * s) ** 2,
			s2 = Math.sin(2 * Math.PI * s) ** 2;
		return {
			force: [-0.2 * W * Math.sin(2 * Math.PI * s) * s1, W * (0.9 * s1 + 0.35 * s2), -side(f) * 0.05 * W * s1] as Vec3,
			torque: [0, side(f) * 0.004 * W * Math.sin(2 * Math.PI * s) * s1, 0] as Vec3,
			point: [fp.x - 0.02 + (0.8 * Lf + 0.02) * s, 0, fp.z + side(f) * 0.01 * s] as Vec3
		};
	};
	const loadOf = (f: 'left' | 'right') => (t: number) => {
		const A = ankleAt(f, t);
		if (!A.stance || A.stance.s <= 0 || A.stance.s >= 1) return null;
		const j = A.stance.j;
		if (!steps.some((s) => s.foot === f && s.step === j)) return null;
		return grfAt(f, footprint(f, j), A.stance.s);
	};

	const sim = simulateRecording({
		name: spec.name,
		body: spec.body,
		setup,
		sampleHz: angleHz,
		duration,
		targets,
		externalLoads: [
			{ body: 'right.foot', at: loadOf('right') },
			{ body: 'left.foot', at: loadOf('left') }
		],
		// the massless pelvis turning about its own Z axis (through both hips) moves nothing the hip flexions do not: a
		// pelvis mass for the simulation keeps M(q) invertible; the leg moments do not depend on it
		simulationMasses: {
			'pelvis.rz': {
				mass: 10,
				com: [0, 0, 0],
				inertia: [
					[0.08, 0, 0],
					[0, 0.08, 0],
					[0, 0, 0.06]
				]
			}
		}
	});

	// the plates' signals at the force rate
	const nF = Math.round(duration * forceHz) + 1;
	const forceTime = Float64Array.from({ length: nF }, (_, k) => k / forceHz);
	const lab = steps.map((s, i) => {
		const grf = new Float64Array(3 * nF),
			cop = new Float64Array(3 * nF).fill(NaN),
			freeMoment = new Float64Array(3 * nF);
		for (let k = 0; k < nF; k++) {
			const l = loadOf(s.foot)(forceTime[k]);
			if (!l) continue;
			grf.set(l.force, 3 * k);
			cop.set(l.point, 3 * k);
			freeMoment.set(l.torque, 3 * k);
		}
		return { plate: plates[i].name, grf, cop, freeMoment };
	});
	const signals = plates.map((plate, i) => ({ plate, signals: labToPlate(plate, lab[i]) }));
	const stances = steps.map((s, i) => {
		const s0 = first[s.foot] + s.step * T;
		return { plate: plates[i].name, foot: s.foot, start: s0, end: s0 + beta * T };
	});
	return {
		spec,
		setup,
		sim,
		plates,
		angleHz,
		forceHz,
		signals,
		lab,
		forceTime,
		stances,
		anglesCsv: recordingCsv(sim),
		forcesCsv: forcesCsv(forceTime, signals),
		torquesCsv: torquesCsv(sim)
	};
}

/** Plate signals as a force file in our column scheme: `time (s)`, then per plate its force, and moments or CoP and free moment. */
export function forcesCsv(time: Float64Array, plates: { plate: ForcePlate; signals: PlateSignals }[], decimals = 6): string {
	const cols: { name: string; data: Float64Array; stride: number; offset: number }[] = [];
	for (const { plate, signals } of plates) {
		const p = plate.name;
		for (let c = 0; c < 3; c++) cols.push({ name: `${p}.force.${'xyz'[c]} (N)`, data: signals.force, stride: 3, offset: c });
		if (plate.output === 'forces-moments')
			for (let c = 0; c < 3; c++) cols.push({ name: `${p}.moment.${'xyz'[c]} (N·m)`, data: signals.moment!, stride: 3, offset: c });
		else {
			for (let c = 0; c < 3; c++) cols.push({ name: `${p}.cop.${'xyz'[c]} (m)`, data: signals.cop!, stride: 3, offset: c });
			cols.push({ name: `${p}.freemoment (N·m)`, data: signals.freeMoment!, stride: 1, offset: 0 });
		}
	}
	const lines = [['time (s)', ...cols.map((c) => c.name)].join(',')];
	for (let k = 0; k < time.length; k++)
		lines.push([String(Number(time[k].toFixed(9))), ...cols.map((c) => c.data[k * c.stride + c.offset].toFixed(decimals))].join(','));
	return lines.join('\n') + '\n';
}
