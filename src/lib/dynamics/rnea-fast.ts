// The Newton–Euler passes of rnea.ts tuned for whole recordings: a revolute joint about a body axis with no fixed rotation
// (model.planar) is turned by cos q and sin q alone, with vectors in local variables and no lever arm for a joint at its
// parent's origin; every other joint takes rnea.ts's own steps. Must agree with rnea.ts (tests/unit/dynamics/fast-path.test.ts).
import { PRISMATIC, type Model } from './model';
import { addToParent, propagateMotion, relativeTransforms, worldRotations } from './joints';
import { reduceLoads } from './loads';
import type { NewtonEulerFrame } from './rnea';
import type { Workspace } from './workspace';

type F = Float64Array;

// The turned joints below take a vector's components in the order j0 j1 j2: the joint's axis, then the two after it
// cyclically (x y z about X, y z x about Y, z x y about Z). A cyclic reordering keeps cross products, so one set of
// formulas serves all three axes. The callers pass literal j0 j1 j2 and the components in that order, so that the compiler,
// inlining each call, indexes with constants as hand-written cases per axis would; looking the order up per joint instead
// measured 7–10 % slower (npm run bench:dynamics).

/**
 * Body i's ω, ω̇ and origin acceleration (into w, al, acc at i3) from its parent's ω (w·), ω̇ (d·) and the acceleration of
 * the joint point (a·), all in the parent's axes: turned by Eᵀ (c = cos q, s = ±sin q), then the joint's rates along the axis.
 */
function turnedMotion(
	w: F,
	al: F,
	acc: F,
	i3: number,
	c: number,
	s: number,
	sdq: number,
	sddq: number,
	w0: number,
	w1: number,
	w2: number,
	d0: number,
	d1: number,
	d2: number,
	a0: number,
	a1: number,
	a2: number,
	j0: number,
	j1: number,
	j2: number
): void {
	const u1 = c * w1 + s * w2,
		u2 = c * w2 - s * w1;
	w[i3 + j0] = w0 + sdq;
	w[i3 + j1] = u1;
	w[i3 + j2] = u2;
	// ω̇ = Eᵀω̇_p + e q̈ + (Eᵀω_p) × e q̇
	al[i3 + j0] = d0 + sddq;
	al[i3 + j1] = c * d1 + s * d2 + sdq * u2;
	al[i3 + j2] = c * d2 - s * d1 - sdq * u1;
	acc[i3 + j0] = a0;
	acc[i3 + j1] = c * a1 + s * a2;
	acc[i3 + j2] = c * a2 - s * a1;
}

/**
 * Adds body i's joint load (force f·, torque t· in its own axes) to its parent's sums in f, t at p3: turned by E and, unless
 * the joint is at the parent's origin, moved there by the lever arm r (rp at i3).
 */
function turnedLoad(
	f: F,
	t: F,
	rp: F,
	i3: number,
	p3: number,
	c: number,
	s: number,
	lever: boolean,
	f0: number,
	f1: number,
	f2: number,
	t0: number,
	t1: number,
	t2: number,
	j0: number,
	j1: number,
	j2: number
): void {
	const g1 = c * f1 - s * f2,
		g2 = s * f1 + c * f2;
	let n1 = c * t1 - s * t2,
		n2 = s * t1 + c * t2;
	if (lever) {
		const r0 = rp[i3 + j0],
			r1 = rp[i3 + j1],
			r2 = rp[i3 + j2];
		t0 += r1 * g2 - r2 * g1;
		n1 += r2 * f0 - r0 * g2;
		n2 += r0 * g1 - r1 * f0;
	}
	f[p3 + j0] += f0;
	f[p3 + j1] += g1;
	f[p3 + j2] += g2;
	t[p3 + j0] += t0;
	t[p3 + j1] += n1;
	t[p3 + j2] += n2;
}

/** rnea.ts's rneaFrame, faster; `fullTransforms` also fills ws.E of the turned joints (for world rotations). */
export const rneaFrameFast: NewtonEulerFrame = (m, ws, q, qd, qdd, o, gravity, loads, Q, qo, fullTransforms = false) => {
	const hasLoads = loads !== null && loads.length > 0;
	relativeTransforms(m, ws, q, o, hasLoads || fullTransforms);
	if (hasLoads) {
		worldRotations(m, ws);
		reduceLoads(m, ws, loads);
	}
	for (let k = 0; k < 3; k++) ws.acc[3 * m.n + k] = -gravity[k]; // the ground (slot n)
	outward(m, ws, qd, qdd, o);
	inward(m, ws, Q, qo, hasLoads);
};

// The two passes are functions of their own so that each, compiled on its own, inlines its three calls of turnedMotion or
// turnedLoad (the compiler limits how much code it inlines into one function).

/** Outward: ω, ω̇ and the origin's acceleration a of each body, from its parent's (slot p). */
function outward(m: Model, ws: Workspace, qd: ArrayLike<number> | null, qdd: ArrayLike<number> | null, o: number): void {
	const { n, parent, planar, axisSign, anchorZero } = m;
	const { rp, w, al, acc, cs } = ws;
	for (let i = 0; i < n; i++) {
		const p = parent[i] < 0 ? n : parent[i],
			axisCode = planar[i];
		const dq = qd === null ? 0 : qd[o + i],
			ddq = qdd === null ? 0 : qdd[o + i];
		if (axisCode === 0) {
			propagateMotion(m, ws, i, p, dq, ddq);
			continue;
		}
		const i3 = 3 * i,
			p3 = 3 * p;
		const wx = w[p3],
			wy = w[p3 + 1],
			wz = w[p3 + 2];
		const dx = al[p3],
			dy = al[p3 + 1],
			dz = al[p3 + 2];
		let ax = acc[p3],
			ay = acc[p3 + 1],
			az = acc[p3 + 2];
		if (anchorZero[i] === 0) {
			// the joint point r, unless it is the parent's origin: a_p + ω̇_p × r + ω_p × (ω_p × r)
			const rx = rp[i3],
				ry = rp[i3 + 1],
				rz = rp[i3 + 2];
			const ux = wy * rz - wz * ry,
				uy = wz * rx - wx * rz,
				uz = wx * ry - wy * rx;
			ax += dy * rz - dz * ry + (wy * uz - wz * uy);
			ay += dz * rx - dx * rz + (wz * ux - wx * uz);
			az += dx * ry - dy * rx + (wx * uy - wy * ux);
		}
		const c = cs[2 * i],
			s = cs[2 * i + 1],
			sdq = axisSign[i] * dq, // about −e the rates enter with the opposite sign
			sddq = axisSign[i] * ddq;
		if (axisCode === 1) turnedMotion(w, al, acc, i3, c, s, sdq, sddq, wx, wy, wz, dx, dy, dz, ax, ay, az, 0, 1, 2);
		else if (axisCode === 2) turnedMotion(w, al, acc, i3, c, s, sdq, sddq, wy, wz, wx, dy, dz, dx, ay, az, ax, 1, 2, 0);
		else turnedMotion(w, al, acc, i3, c, s, sdq, sddq, wz, wx, wy, dz, dx, dy, az, ax, ay, 2, 0, 1);
	}
}

/** Inward: each body's joint load from its own motion and its children's loads (summed into f, t as they come); Q along the joint's axis. */
function inward(m: Model, ws: Workspace, Q: F, qo: number, hasLoads: boolean): void {
	const { n, parent, kind, axis, mass, com, inertia, planar, anchorZero } = m;
	const { rp, w, al, acc, f, t, cs } = ws;
	f.fill(0);
	t.fill(0);
	for (let i = n - 1; i >= 0; i--) {
		const i3 = 3 * i,
			i9 = 9 * i;
		let fx = f[i3],
			fy = f[i3 + 1],
			fz = f[i3 + 2];
		let tx = t[i3],
			ty = t[i3 + 1],
			tz = t[i3 + 2];
		const mi = mass[i];
		if (mi !== 0) {
			const wx = w[i3],
				wy = w[i3 + 1],
				wz = w[i3 + 2];
			const dx = al[i3],
				dy = al[i3 + 1],
				dz = al[i3 + 2];
			const cx = com[i3],
				cy = com[i3 + 1],
				cz = com[i3 + 2];
			// F = m (a + ω̇ × c + ω × (ω × c)), the centre of mass's acceleration
			const ux = wy * cz - wz * cy,
				uy = wz * cx - wx * cz,
				uz = wx * cy - wy * cx;
			const Fx = mi * (acc[i3] + (dy * cz - dz * cy) + (wy * uz - wz * uy));
			const Fy = mi * (acc[i3 + 1] + (dz * cx - dx * cz) + (wz * ux - wx * uz));
			const Fz = mi * (acc[i3 + 2] + (dx * cy - dy * cx) + (wx * uy - wy * ux));
			// N = I ω̇ + ω × (I ω) about the centre of mass; I is symmetric
			const I0 = inertia[i9],
				I1 = inertia[i9 + 1],
				I2 = inertia[i9 + 2],
				I4 = inertia[i9 + 4],
				I5 = inertia[i9 + 5],
				I8 = inertia[i9 + 8];
			const hx = I0 * wx + I1 * wy + I2 * wz,
				hy = I1 * wx + I4 * wy + I5 * wz,
				hz = I2 * wx + I5 * wy + I8 * wz;
			fx += Fx;
			fy += Fy;
			fz += Fz;
			tx += I0 * dx + I1 * dy + I2 * dz + (wy * hz - wz * hy) + (cy * Fz - cz * Fy);
			ty += I1 * dx + I4 * dy + I5 * dz + (wz * hx - wx * hz) + (cz * Fx - cx * Fz);
			tz += I2 * dx + I5 * dy + I8 * dz + (wx * hy - wy * hx) + (cx * Fy - cy * Fx);
		}
		if (hasLoads) {
			fx -= ws.loadF[i3];
			fy -= ws.loadF[i3 + 1];
			fz -= ws.loadF[i3 + 2];
			tx -= ws.loadT[i3];
			ty -= ws.loadT[i3 + 1];
			tz -= ws.loadT[i3 + 2];
		}
		f[i3] = fx;
		f[i3 + 1] = fy;
		f[i3 + 2] = fz;
		t[i3] = tx;
		t[i3 + 1] = ty;
		t[i3 + 2] = tz;
		Q[qo + i] =
			kind[i] === PRISMATIC ? axis[i3] * fx + axis[i3 + 1] * fy + axis[i3 + 2] * fz : axis[i3] * tx + axis[i3 + 1] * ty + axis[i3 + 2] * tz;
		if (parent[i] < 0) continue;

		// what the parent feels
		const axisCode = planar[i],
			p3 = 3 * parent[i];
		if (axisCode === 0) {
			addToParent(ws, i, parent[i]);
			continue;
		}
		const c = cs[2 * i],
			s = cs[2 * i + 1],
			lever = anchorZero[i] === 0;
		if (axisCode === 1) turnedLoad(f, t, rp, i3, p3, c, s, lever, fx, fy, fz, tx, ty, tz, 0, 1, 2);
		else if (axisCode === 2) turnedLoad(f, t, rp, i3, p3, c, s, lever, fy, fz, fx, ty, tz, tx, 1, 2, 0);
		else turnedLoad(f, t, rp, i3, p3, c, s, lever, fz, fx, fy, tz, tx, ty, 2, 0, 1);
	}
}
