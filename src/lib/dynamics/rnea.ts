// Inverse dynamics by the recursive Newton–Euler method (Luh, Walker & Paul 1980), in body-fixed frames. rneaFrame is the
// readable form; the public functions below (and bias) run the tuned copy in rnea-fast.ts, which a test holds to this one.
import { PRISMATIC, STANDARD_GRAVITY, type Model, type Vec3 } from './model';
import { addToParent, jointTransform, propagateMotion, worldRotations } from './joints';
import { reduceLoads } from './loads';
import { rneaFrameFast } from './rnea-fast';
import { addCross3, addScaled3, dot3, mul3, pointAcceleration } from './vec';
import { createWorkspace, type ExternalLoad, type Workspace } from './workspace';

/**
 * One frame of recursive Newton–Euler, the signature both passes share. Reads q, q̇, q̈ at offset `o` (null q̇ or q̈ for
 * zero), writes Q at `Q[qo…qo+n)`, and leaves each joint's reaction (parent on body, at the joint point, body axes) in
 * ws.f / ws.t. Gravity enters as an upward acceleration of the ground, so the reactions include it. `fullTransforms`
 * (tuned passes only) also fills ws.E of the joints they turn by cos q and sin q, for world rotations afterwards.
 */
export type NewtonEulerFrame = (
	m: Model,
	ws: Workspace,
	q: ArrayLike<number>,
	qd: ArrayLike<number> | null,
	qdd: ArrayLike<number> | null,
	o: number,
	gravity: Vec3,
	loads: readonly ExternalLoad[] | null,
	Q: Float64Array,
	qo: number,
	fullTransforms?: boolean
) => void;

/** The readable passes. */
export const rneaFrame: NewtonEulerFrame = (m, ws, q, qd, qdd, o, gravity, loads, Q, qo) => {
	const { n, parent, kind, axis } = m;
	const { f, t } = ws;
	// slot n is the ground, parent of the roots: ω = α = 0 (never written), a = −g
	for (let k = 0; k < 3; k++) ws.acc[3 * n + k] = -gravity[k];

	// Outward: velocities and accelerations, parent before child.
	for (let i = 0; i < n; i++) {
		const p = parent[i];
		jointTransform(m, ws, i, q[o + i]);
		propagateMotion(m, ws, i, p < 0 ? n : p, qd === null ? 0 : qd[o + i], qdd === null ? 0 : qdd[o + i]);
	}
	if (loads !== null && loads.length > 0) {
		worldRotations(m, ws);
		reduceLoads(m, ws, loads);
	} else {
		ws.loadF.fill(0);
		ws.loadT.fill(0);
	}

	// Inward: forces, child before parent.
	f.fill(0);
	t.fill(0);
	for (let i = n - 1; i >= 0; i--) {
		bodyWrench(m, ws, i);
		Q[qo + i] = dot3(axis, 3 * i, kind[i] === PRISMATIC ? f : t, 3 * i); // onto the joint's axis
		if (parent[i] >= 0) addToParent(ws, i, parent[i]);
	}
};

/**
 * Adds body i's own load to ws.f / ws.t, which hold what its children need: about the joint point,
 * m·a_c and I·α + ω × I·ω + c × m·a_c (I about the centre of mass c), less the external loads.
 * A massless body (a link inside a multi-DOF joint) contributes no inertia.
 */
function bodyWrench(m: Model, ws: Workspace, i: number): void {
	const { w, al, acc, f, t, tmp } = ws;
	const mi = m.mass[i],
		i3 = 3 * i,
		i9 = 9 * i;
	if (mi !== 0) {
		pointAcceleration(acc, al, w, i3, m.com, i3, tmp, 0);
		addScaled3(mi, tmp, 0, f, i3);
		addCross3(mi, m.com, i3, tmp, 0, t, i3);
		mul3(m.inertia, i9, al, i3, tmp, 3);
		addScaled3(1, tmp, 3, t, i3);
		mul3(m.inertia, i9, w, i3, tmp, 3);
		addCross3(1, w, i3, tmp, 3, t, i3);
	}
	addScaled3(-1, ws.loadF, i3, f, i3);
	addScaled3(-1, ws.loadT, i3, t, i3);
}

export interface DynamicsOptions {
	/** Acceleration due to gravity in ground axes, m/s²; default 9.80665 m/s² along −Y. */
	gravity?: Vec3;
	/** External loads; in c(q, q̇) and subtracted from the reactions. */
	loads?: readonly ExternalLoad[];
}

export interface InverseDynamicsResult {
	/** Generalised joint forces: N·m for revolute joints, N for prismatic ones. */
	Q: Float64Array;
	/**
	 * Force and torque that the parent (or the ground) exerts on body i at its joint point, as 3n arrays.
	 * `force`/`torque`: in body i's own axes. `forceWorld`/`torqueWorld`: in ground axes.
	 */
	force: Float64Array;
	torque: Float64Array;
	forceWorld: Float64Array;
	torqueWorld: Float64Array;
}

/** Inverse dynamics for one state: Q = M(q) q̈ + c(q, q̇), plus every joint's reaction. */
export function inverseDynamics(
	m: Model,
	q: ArrayLike<number>,
	qd: ArrayLike<number>,
	qdd: ArrayLike<number>,
	opts: DynamicsOptions = {},
	ws: Workspace = createWorkspace(m)
): InverseDynamicsResult {
	const Q = new Float64Array(m.n);
	rneaFrameFast(m, ws, q, qd, qdd, 0, opts.gravity ?? STANDARD_GRAVITY, opts.loads ?? null, Q, 0, true);
	worldRotations(m, ws);
	const force = ws.f.slice(),
		torque = ws.t.slice();
	const forceWorld = new Float64Array(3 * m.n),
		torqueWorld = new Float64Array(3 * m.n);
	toWorld(ws.Rw, force, forceWorld, m.n);
	toWorld(ws.Rw, torque, torqueWorld, m.n);
	return { Q, force, torque, forceWorld, torqueWorld };
}

/** Body-axes vectors (3n, from v) into ground axes (into out at offset oo). */
function toWorld(R: Float64Array, v: Float64Array, out: Float64Array, n: number, oo = 0): void {
	for (let i = 0; i < n; i++) mul3(R, 9 * i, v, 3 * i, out, oo + 3 * i);
}

export interface BatchOutput {
	/** frames × n generalised forces (row per frame). */
	Q: Float64Array;
	/** Optional frames × n × 3 reactions; `reactionFrame` says whose axes. */
	force?: Float64Array;
	torque?: Float64Array;
}

/** Options of inverseDynamicsBatch: those of one state, reactions' axes, and loads that change from frame to frame. */
export interface BatchOptions extends DynamicsOptions {
	reactionFrame?: 'body' | 'world';
	/**
	 * The external loads of frame k (0-based within this call), in addition to `loads` (which apply to every frame);
	 * null or [] for none. Called once per frame: return arrays and loads kept by the caller and refilled in place
	 * (e.g. a world point that moves), so that nothing is allocated per frame.
	 */
	loadsAt?: (frame: number) => readonly ExternalLoad[] | null;
}

/**
 * Inverse dynamics over a whole recording. q, qd, qdd are frames × n, row per frame (Float64Array).
 * Allocates nothing per frame; pass `ws` to reuse a workspace across calls. `loads` apply to every frame,
 * `loadsAt(k)` to frame k alone.
 */
export function inverseDynamicsBatch(
	m: Model,
	frames: number,
	q: Float64Array,
	qd: Float64Array,
	qdd: Float64Array,
	out: BatchOutput,
	opts: BatchOptions = {},
	ws: Workspace = createWorkspace(m)
): BatchOutput {
	const n = m.n;
	for (const [name, arr] of [
		['q', q],
		['qd', qd],
		['qdd', qdd],
		['Q', out.Q]
	] as const) {
		if (arr.length < frames * n) throw new RangeError(`${name} holds ${arr.length} values; ${frames} frames × ${n} DOF need ${frames * n}`);
	}
	const g = opts.gravity ?? STANDARD_GRAVITY;
	const fixed = opts.loads && opts.loads.length ? opts.loads : null;
	const loadsAt = opts.loadsAt;
	// a frame with both kinds joins them in this one array, refilled per frame (its capacity is kept: no allocation)
	const joined: ExternalLoad[] = fixed ? [...fixed] : [];
	const world = opts.reactionFrame === 'world';
	for (let k = 0; k < frames; k++) {
		const o = k * n;
		let loads = fixed;
		if (loadsAt) {
			const own = loadsAt(k);
			if (own && own.length) {
				if (fixed) {
					joined.length = fixed.length;
					for (let j = 0; j < own.length; j++) joined.push(own[j]);
					loads = joined;
				} else loads = own;
			}
		}
		rneaFrameFast(m, ws, q, qd, qdd, o, g, loads, out.Q, o, world);
		if (out.force || out.torque) {
			if (world) {
				if (!loads) worldRotations(m, ws);
				if (out.force) toWorld(ws.Rw, ws.f, out.force, n, 3 * o);
				if (out.torque) toWorld(ws.Rw, ws.t, out.torque, n, 3 * o);
			} else {
				if (out.force) out.force.set(ws.f, 3 * o);
				if (out.torque) out.torque.set(ws.t, 3 * o);
			}
		}
	}
	return out;
}
