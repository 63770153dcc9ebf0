// Preallocated scratch arrays for the engine's per-frame loops, so whole recordings run without allocation.
import type { Model, Vec3 } from './model';

/**
 * An external load on a body: a force through a point plus a free torque.
 * `frame` says in which axes `force` and `torque` are given: the ground's ('world', default) or the body's.
 * `pointFrame` says what `point` is: body-frame coordinates relative to the body's joint point ('body', default), or
 * ground coordinates of a point in the lab ('world'; e.g. a centre of pressure), taken as the body's point that lies
 * there at this frame.
 */
export interface ExternalLoad {
	body: number;
	/** Point of application (m): body-frame coordinates from the body's joint point, or ground coordinates (pointFrame 'world'). */
	point: Vec3;
	force: Vec3;
	torque?: Vec3;
	frame?: 'world' | 'body';
	pointFrame?: 'body' | 'world';
}

export interface Workspace {
	readonly model: Model;
	/** Relative rotation of each body, body → parent (row-major). */
	readonly E: Float64Array;
	/** cos q, sin q of each plane-rotation joint (model.planar), used instead of E on the fast path. */
	readonly cs: Float64Array;
	/** Each body's origin in its parent's frame: the anchor, which a prismatic joint moves each frame. */
	readonly rp: Float64Array;
	/**
	 * Body-frame angular velocity, angular acceleration, origin acceleration (gravity included as −g), 3(n + 1)
	 * long: slot n is the ground (at rest, accelerating at −g), the parent of every root.
	 */
	readonly w: Float64Array;
	readonly al: Float64Array;
	readonly acc: Float64Array;
	/** Joint reaction force and torque on each body at its joint point, body frame (its children's sums during the inward pass). */
	readonly f: Float64Array;
	readonly t: Float64Array;
	/** A few 3-vectors of scratch for the Newton–Euler passes. */
	readonly tmp: Float64Array;
	/** World orientation of each body (row-major, body → world), filled when world outputs or loads need it. */
	readonly Rw: Float64Array;
	readonly Q: Float64Array;
	/** External loads reduced to each body's joint point, body frame. */
	readonly loadF: Float64Array;
	readonly loadT: Float64Array;
	/** World position of each body's origin (its joint point). */
	readonly pw: Float64Array;
	/** Composite-body mass, first moment and rotational inertia about the world origin (mass-matrix pass). */
	readonly cm: Float64Array;
	readonly ch: Float64Array;
	readonly cI: Float64Array;
	/** Each joint's motion axis as a spatial vector in world coordinates [ω; v at the world origin]. */
	readonly S: Float64Array;
	readonly scratchCom: Float64Array;
	readonly scratchN: Float64Array;
	readonly scratchN2: Float64Array;
	readonly scratchNN: Float64Array;
}

export function createWorkspace(model: Model): Workspace {
	const n = model.n;
	const v3 = () => new Float64Array(3 * n);
	return {
		model,
		E: new Float64Array(9 * n),
		cs: new Float64Array(2 * n),
		rp: Float64Array.from(model.anchor),
		w: new Float64Array(3 * n + 3),
		al: new Float64Array(3 * n + 3),
		acc: new Float64Array(3 * n + 3),
		f: v3(),
		t: v3(),
		tmp: new Float64Array(12),
		Rw: new Float64Array(9 * n),
		Q: new Float64Array(n),
		loadF: v3(),
		loadT: v3(),
		pw: v3(),
		cm: new Float64Array(n),
		ch: v3(),
		cI: new Float64Array(9 * n),
		S: new Float64Array(6 * n),
		scratchCom: v3(),
		scratchN: new Float64Array(n),
		scratchN2: new Float64Array(n),
		scratchNN: new Float64Array(n * n)
	};
}
