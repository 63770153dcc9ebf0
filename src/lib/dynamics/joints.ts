// The two joint kinds: each supplies its transform (rotation body → parent, origin in the parent) and how its rate moves the body.
import { PRISMATIC, type Model } from './model';
import { addCross3, addScaled3, axisRotation, matMul3, mul3, mulT3, pointAcceleration } from './vec';
import type { Workspace } from './workspace';

/**
 * Revolute joint: E = R0 · Rot(axis, q), right-handed; the origin stays at the anchor (ws.rp as created). Also
 * keeps cos q and ±sin q (ws.cs) for rnea-fast.ts, which turns a joint about a body axis with no fixed rotation
 * (model.planar) by those alone and asks for E there only when `full` is set.
 */
export function revoluteTransform(m: Model, ws: Workspace, i: number, q: number, full: boolean): void {
	const c = Math.cos(q),
		s = Math.sin(q);
	ws.cs[2 * i] = c;
	ws.cs[2 * i + 1] = m.axisSign[i] * s; // about −e, a turn by q is one by −q about e
	if (m.planar[i] !== 0 && !full) return;
	axisRotation(m.axis, 3 * i, c, s, ws.E, 9 * i);
	if (m.hasRot0[i]) matMul3(m.rot0, 9 * i, ws.E, 9 * i, ws.E, 9 * i);
}

/** Prismatic joint: E = R0; the origin slides along the axis, to anchor + R0 · axis · q. */
export function prismaticTransform(m: Model, ws: Workspace, i: number, q: number): void {
	for (let k = 9 * i; k < 9 * i + 9; k++) ws.E[k] = m.rot0[k];
	mul3(ws.E, 9 * i, m.axis, 3 * i, ws.rp, 3 * i);
	for (let k = 3 * i; k < 3 * i + 3; k++) ws.rp[k] = m.anchor[k] + ws.rp[k] * q;
}

/** Body i's transform for its joint's kind (ws.E, ws.cs, ws.rp). */
export function jointTransform(m: Model, ws: Workspace, i: number, q: number, full = true): void {
	if (m.kind[i] === PRISMATIC) prismaticTransform(m, ws, i, q);
	else revoluteTransform(m, ws, i, q, full);
}

/** Every body's transform for the q at offset `o`. */
export function relativeTransforms(m: Model, ws: Workspace, q: ArrayLike<number>, o: number, full = true): void {
	for (let i = 0; i < m.n; i++) jointTransform(m, ws, i, q[o + i], full);
}

/** World orientation of every body (body → world) from the relative rotations already in ws.E. */
export function worldRotations(m: Model, ws: Workspace): void {
	for (let i = 0; i < m.n; i++) {
		const p = m.parent[i];
		if (p < 0) for (let k = 9 * i; k < 9 * i + 9; k++) ws.Rw[k] = ws.E[k];
		else matMul3(ws.Rw, 9 * p, ws.E, 9 * i, ws.Rw, 9 * i);
	}
}

/** out = Eᵀ·v: parent axes → body i's axes. */
export function toBody(ws: Workspace, i: number, v: Float64Array, vo: number, out: Float64Array, oo: number): void {
	mulT3(ws.E, 9 * i, v, vo, out, oo);
}

/** out = E·v: body i's axes → parent axes. */
export function toParent(ws: Workspace, i: number, v: Float64Array, vo: number, out: Float64Array, oo: number): void {
	mul3(ws.E, 9 * i, v, vo, out, oo);
}

/**
 * Adds joint i's own rate q̇, q̈ to body i's motion, whose parent part is already in body axes (ws.w, ws.al, ws.acc).
 * Revolute about the unit axis e: α += e q̈ + ω × e q̇, then ω += e q̇. Prismatic along e: the origin's acceleration gains e q̈
 * and the Coriolis term 2 ω × e q̇.
 */
export function addJointRate(m: Model, ws: Workspace, i: number, qd: number, qdd: number): void {
	const i3 = 3 * i;
	if (m.kind[i] === PRISMATIC) {
		addCross3(2 * qd, ws.w, i3, m.axis, i3, ws.acc, i3);
		addScaled3(qdd, m.axis, i3, ws.acc, i3);
	} else {
		addCross3(qd, ws.w, i3, m.axis, i3, ws.al, i3);
		addScaled3(qdd, m.axis, i3, ws.al, i3);
		addScaled3(qd, m.axis, i3, ws.w, i3);
	}
}

/**
 * Body i's motion from that of its parent (slot p; the ground's slot n for a root), in body axes: Eᵀω_p, Eᵀω̇_p and
 * Eᵀ(acceleration of the joint point), then the joint's own rate.
 */
export function propagateMotion(m: Model, ws: Workspace, i: number, p: number, qd: number, qdd: number): void {
	const { w, al, acc, tmp } = ws;
	const i3 = 3 * i,
		p3 = 3 * p;
	pointAcceleration(acc, al, w, p3, ws.rp, i3, tmp, 0);
	toBody(ws, i, tmp, 0, acc, i3);
	toBody(ws, i, w, p3, w, i3);
	toBody(ws, i, al, p3, al, i3);
	addJointRate(m, ws, i, qd, qdd);
}

/** Adds body i's joint load (ws.f / ws.t) to its parent p's, turned into the parent's axes and moved to the parent's origin. */
export function addToParent(ws: Workspace, i: number, p: number): void {
	const { f, t, tmp } = ws;
	const i3 = 3 * i,
		p3 = 3 * p;
	toParent(ws, i, f, i3, tmp, 0);
	toParent(ws, i, t, i3, tmp, 3);
	addScaled3(1, tmp, 0, f, p3);
	addScaled3(1, tmp, 3, t, p3);
	addCross3(1, ws.rp, i3, tmp, 0, t, p3);
}
