// Recordings with known joint moments: forward simulation of a session model under smooth tracking torques, written in our file layout.
import {
	compileModel,
	createWorkspace,
	inverseDynamics,
	simulate,
	type ExternalLoad,
	type Mat3,
	type Model,
	type Vec3
} from '../dynamics/index';
import type { ParticipantBody } from '../anthropometry/scale';
import { buildSessionModel, type SessionModel, type SessionSetupInput } from './session-model';

/** A target path for one DOF: waypoints joined by minimum-jerk segments (Flash & Hogan 1985), holding before the first and after the last. */
export type Waypoints = { t: number; value: number }[];
/** A target path given as a smooth function of time: [position, velocity, acceleration] (SI). Lets a trial start and end in motion. */
export type TargetPath = (t: number) => [number, number, number];

/** Position, velocity and acceleration of a target at time t. */
function targetAt(w: Waypoints | TargetPath, t: number): [number, number, number] {
	return typeof w === 'function' ? w(t) : minJerk(w, t);
}

/** Minimum-jerk position, velocity and acceleration along waypoints at time t. */
export function minJerk(w: Waypoints, t: number): [number, number, number] {
	if (t <= w[0].t) return [w[0].value, 0, 0];
	for (let i = 1; i < w.length; i++) {
		if (t <= w[i].t) {
			const T = w[i].t - w[i - 1].t,
				d = w[i].value - w[i - 1].value,
				s = (t - w[i - 1].t) / T;
			// x = x0 + d (10 s³ − 15 s⁴ + 6 s⁵)
			return [
				w[i - 1].value + d * (10 * s ** 3 - 15 * s ** 4 + 6 * s ** 5),
				(d * (30 * s ** 2 - 60 * s ** 3 + 30 * s ** 4)) / T,
				(d * (60 * s - 180 * s ** 2 + 120 * s ** 3)) / T ** 2
			];
		}
	}
	return [w[w.length - 1].value, 0, 0];
}

export interface RecordingSpec {
	name: string;
	body: ParticipantBody;
	setup: SessionSetupInput;
	sampleHz: number;
	duration: number;
	/** Target per DOF name (SI: rad or m); DOFs without a target hold 0. */
	targets: Record<string, Waypoints | TargetPath>;
	/** Natural frequency (Hz) and damping ratio of the tracking error; default 4 Hz, 1 (critically damped). */
	trackingHz?: number;
	damping?: number;
	/** RK4 step, s; default 0.5 ms. */
	step?: number;
	/**
	 * Known external loads (e.g. a ground reaction force): on the named engine body, a force and a free torque in lab
	 * axes through a LAB point (the body's particle there, as a centre of pressure), as functions of time; null when none.
	 * They act in the forward simulation, and the tracking law's joint forces (the known moments) include them.
	 */
	externalLoads?: { body: string; at: (t: number) => { force: Vec3; point: Vec3; torque?: Vec3 } | null }[];
	/**
	 * Mass, centre of mass and inertia given to named bodies for the simulation only: prescribed coordinates can be
	 * redundant for a massless body (a pelvis turning about the line through both hips moves nothing the hip flexions do
	 * not), which leaves M(q) singular. A body's own mass changes no joint force of the bodies beyond it; the joint forces
	 * of its own and earlier coordinates (prescribed, not reported) then include it.
	 */
	simulationMasses?: Record<string, { mass: number; com: Vec3; inertia: Mat3 }>;
}

export interface SimulatedRecording {
	spec: RecordingSpec;
	built: SessionModel;
	model: Model;
	time: Float64Array;
	/** frames × n, row per frame, SI units, in built.dofs order. */
	q: Float64Array;
	qd: Float64Array;
	qdd: Float64Array;
	/** The joint forces that drove the simulation at each output time (frames × n): N·m, N. */
	Q: Float64Array;
}

/**
 * Simulates the session model from the targets' start (position and velocity: at rest for waypoints, in motion
 * for a TargetPath that moves at t = 0) under computed-torque tracking:
 * Q(t, q, q̇) = ID(q, q̇, q̈ref + Kp (qref − q) + Kd (q̇ref − q̇)), a smooth law whose value is saved as the
 * known joint moment. The motion itself comes from forward dynamics (M⁻¹(Q − c), RK4), so recovering Q from
 * the sampled angles exercises differentiation and inverse dynamics against the integrator.
 */
export function simulateRecording(spec: RecordingSpec): SimulatedRecording {
	const built = buildSessionModel(spec.body, spec.setup);
	const masses = spec.simulationMasses ?? {};
	for (const name of Object.keys(masses))
		if (!built.model.bodies.some((b) => b.name === name))
			throw new Error(`simulation mass for "${name}", which is not a body of the model`);
	const model = compileModel({
		...built.model,
		bodies: built.model.bodies.map((b) => (masses[b.name] ? { ...b, ...masses[b.name] } : b))
	});
	const n = model.n;
	const gravity = built.setup.gravity;
	const targets: (Waypoints | TargetPath)[] = built.dofs.map((d) => spec.targets[d.name] ?? [{ t: 0, value: 0 }]);
	for (const name of Object.keys(spec.targets))
		if (!built.dofs.some((d) => d.name === name))
			throw new Error(`target for "${name}", which is not a DOF of the model (${built.dofs.map((d) => d.name).join(', ')})`);
	const wn = 2 * Math.PI * (spec.trackingHz ?? 4),
		zeta = spec.damping ?? 1;
	const Kp = wn * wn,
		Kd = 2 * zeta * wn;
	const ws = createWorkspace(model);
	const a = new Float64Array(n);
	// one load per entry, refilled at each time the law is asked for (simulate calls the law, then forward dynamics with
	// these same load objects, at the same time and state)
	const extra = (spec.externalLoads ?? []).map((e) => {
		const body = built.model.bodies.findIndex((b) => b.name === e.body);
		if (body < 0) throw new Error(`external load on "${e.body}", which is not a body of the model`);
		const load: ExternalLoad = { body, point: [0, 0, 0], force: [0, 0, 0], torque: [0, 0, 0], frame: 'world', pointFrame: 'world' };
		return { load, at: e.at };
	});
	const loads = extra.map((e) => e.load);
	const setLoads = (t: number) => {
		for (const { load, at } of extra) {
			const v = at(t);
			for (let c = 0; c < 3; c++) {
				load.force[c] = v ? v.force[c] : 0;
				load.torque![c] = v?.torque ? v.torque[c] : 0;
				load.point[c] = v ? v.point[c] : 0;
			}
		}
	};
	const law = (t: number, q: ArrayLike<number>, qd: ArrayLike<number>, out: Float64Array) => {
		for (let i = 0; i < n; i++) {
			const [r, rd, rdd] = targetAt(targets[i], t);
			a[i] = rdd + Kp * (r - q[i]) + Kd * (rd - qd[i]);
		}
		setLoads(t);
		out.set(inverseDynamics(model, q, qd, a, { gravity, loads }, ws).Q);
	};
	const frames = Math.round(spec.duration * spec.sampleHz) + 1;
	const times = Float64Array.from({ length: frames }, (_, k) => k / spec.sampleHz);
	const q0 = targets.map((w) => targetAt(w, 0)[0]);
	const qd0 = targets.map((w) => targetAt(w, 0)[1]);
	const sim = simulate(model, { q0, qd0, times, torque: law, method: 'rk4', step: spec.step ?? 5e-4, gravity, loads });
	const Q = new Float64Array(frames * n);
	const Qk = new Float64Array(n);
	for (let k = 0; k < frames; k++) {
		law(times[k], sim.q.subarray(k * n, (k + 1) * n), sim.qd.subarray(k * n, (k + 1) * n), Qk);
		Q.set(Qk, k * n);
	}
	return { spec, built, model, time: times, q: sim.q, qd: sim.qd, qdd: sim.qdd, Q };
}

const DEG = 180 / Math.PI;

/** The simulated angles as a recording file in our layout: `time (s)`, then `<dof> (deg)` or `<limb>.base.p*` / `pelvis.p*` (m). */
export function recordingCsv(sim: SimulatedRecording, decimals = 6): string {
	const { built, time, q } = sim;
	const n = built.dofs.length;
	const header = ['time (s)', ...built.dofs.map((d) => `${d.name} (${d.kind === 'angle' ? 'deg' : 'm'})`)];
	const lines = [header.join(',')];
	for (let k = 0; k < time.length; k++) {
		const row = [formatTime(time[k])];
		for (let i = 0; i < n; i++) row.push((built.dofs[i].kind === 'angle' ? q[k * n + i] * DEG : q[k * n + i]).toFixed(decimals));
		lines.push(row.join(','));
	}
	return lines.join('\n') + '\n';
}

/** The known joint moments (reported DOFs only): `time (s)`, then `<dof> (N·m)`. */
export function torquesCsv(sim: SimulatedRecording, decimals = 6): string {
	const { built, time, Q } = sim;
	const n = built.dofs.length;
	const cols = built.dofs.map((d, i) => ({ d, i })).filter(({ d }) => !d.base);
	const lines = [['time (s)', ...cols.map(({ d }) => `${d.name} (${d.unit === 'm' ? 'N' : 'N·m'})`)].join(',')];
	for (let k = 0; k < time.length; k++) lines.push([formatTime(time[k]), ...cols.map(({ i }) => Q[k * n + i].toFixed(decimals))].join(','));
	return lines.join('\n') + '\n';
}

const formatTime = (t: number) => String(Number(t.toFixed(9)));
