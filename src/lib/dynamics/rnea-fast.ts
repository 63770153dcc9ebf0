// The Newton–Euler passes of rnea.ts tuned for whole recordings: vectors in local variables, a joint about a body axis turned by
// cos q and sin q alone, no lever arm for a joint at its parent's origin. Must agree with rnea.ts (tests/unit/dynamics/fast-path.test.ts).
import { PRISMATIC, type Model, type Vec3 } from './model';
import { relativeTransforms, worldRotations } from './joints';
import { reduceLoads } from './loads';
import type { ExternalLoad, Workspace } from './workspace';

/**
 * The order in which a joint reads and writes vector components, by model.planar: for a plane-rotation joint the
 * axis it turns about first, then the two after it cyclically (x y z about X, y z x about Y, z x y about Z); plain
 * x y z for every other joint. A cyclic reordering keeps cross products, so one set of formulas serves all three axes.
 */
const ORDER = Uint8Array.of(0, 1, 2, 0, 1, 2, 1, 2, 0, 2, 0, 1);

/** rnea.ts's rneaFrame, faster; `fullTransforms` also fills ws.E of plane-rotation joints (for world rotations). */
export function rneaFrameFast(
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
	fullTransforms = false
): void {
	const { n, parent, kind, axis, mass, com, inertia, planar, axisSign, anchorZero } = m;
	const { E, rp, w, al, acc, f, t, fa, na, cs } = ws;
	const hasLoads = loads !== null && loads.length > 0;
	relativeTransforms(m, ws, q, o, hasLoads || fullTransforms);
	if (hasLoads) {
		worldRotations(m, ws);
		reduceLoads(m, ws, loads);
	}
	for (let k = 0; k < 3; k++) acc[3 * n + k] = -gravity[k]; // the ground (slot n)

	// Outward: ω, ω̇ and the origin's acceleration a of each body, from its parent's (p…), in components j0 j1 j2.
	for (let i = 0; i < n; i++) {
		const i3 = 3 * i,
			p3 = 3 * (parent[i] < 0 ? n : parent[i]),
			code = planar[i];
		const j0 = ORDER[3 * code],
			j1 = ORDER[3 * code + 1],
			j2 = ORDER[3 * code + 2];
		const pw0 = w[p3 + j0],
			pw1 = w[p3 + j1],
			pw2 = w[p3 + j2];
		const pd0 = al[p3 + j0],
			pd1 = al[p3 + j1],
			pd2 = al[p3 + j2];
		let pa0 = acc[p3 + j0],
			pa1 = acc[p3 + j1],
			pa2 = acc[p3 + j2];
		if (anchorZero[i] === 0 || kind[i] === PRISMATIC) {
			// the joint point r, unless it is the parent's origin: a_p + ω̇_p × r + ω_p × (ω_p × r)
			const r0 = rp[i3 + j0],
				r1 = rp[i3 + j1],
				r2 = rp[i3 + j2];
			const u0 = pw1 * r2 - pw2 * r1,
				u1 = pw2 * r0 - pw0 * r2,
				u2 = pw0 * r1 - pw1 * r0;
			pa0 += pd1 * r2 - pd2 * r1 + (pw1 * u2 - pw2 * u1);
			pa1 += pd2 * r0 - pd0 * r2 + (pw2 * u0 - pw0 * u2);
			pa2 += pd0 * r1 - pd1 * r0 + (pw0 * u1 - pw1 * u0);
		}
		const dq = qd === null ? 0 : qd[o + i],
			ddq = qdd === null ? 0 : qdd[o + i];
		let w0: number, w1: number, w2: number, d0: number, d1: number, d2: number, a0: number, a1: number, a2: number;
		if (code !== 0) {
			// turned about component j0 by q; about −e the rates enter with the opposite sign
			const c = cs[2 * i],
				s = cs[2 * i + 1],
				sdq = axisSign[i] * dq;
			w0 = pw0 + sdq;
			w1 = c * pw1 + s * pw2;
			w2 = c * pw2 - s * pw1;
			d0 = pd0 + axisSign[i] * ddq;
			d1 = c * pd1 + s * pd2 + sdq * w2;
			d2 = c * pd2 - s * pd1 - sdq * w1;
			a0 = pa0;
			a1 = c * pa1 + s * pa2;
			a2 = c * pa2 - s * pa1;
		} else {
			// j0 j1 j2 = x y z: Eᵀ·v, then the rate along the joint's axis e
			const i9 = 9 * i;
			w0 = E[i9] * pw0 + E[i9 + 3] * pw1 + E[i9 + 6] * pw2;
			w1 = E[i9 + 1] * pw0 + E[i9 + 4] * pw1 + E[i9 + 7] * pw2;
			w2 = E[i9 + 2] * pw0 + E[i9 + 5] * pw1 + E[i9 + 8] * pw2;
			d0 = E[i9] * pd0 + E[i9 + 3] * pd1 + E[i9 + 6] * pd2;
			d1 = E[i9 + 1] * pd0 + E[i9 + 4] * pd1 + E[i9 + 7] * pd2;
			d2 = E[i9 + 2] * pd0 + E[i9 + 5] * pd1 + E[i9 + 8] * pd2;
			a0 = E[i9] * pa0 + E[i9 + 3] * pa1 + E[i9 + 6] * pa2;
			a1 = E[i9 + 1] * pa0 + E[i9 + 4] * pa1 + E[i9 + 7] * pa2;
			a2 = E[i9 + 2] * pa0 + E[i9 + 5] * pa1 + E[i9 + 8] * pa2;
			const e0 = axis[i3],
				e1 = axis[i3 + 1],
				e2 = axis[i3 + 2];
			if (kind[i] === PRISMATIC) {
				// a += e q̈ + 2 ω × e q̇
				a0 += e0 * ddq + 2 * dq * (w1 * e2 - w2 * e1);
				a1 += e1 * ddq + 2 * dq * (w2 * e0 - w0 * e2);
				a2 += e2 * ddq + 2 * dq * (w0 * e1 - w1 * e0);
			} else {
				// ω̇ += e q̈ + ω × e q̇, then ω += e q̇
				d0 += e0 * ddq + dq * (w1 * e2 - w2 * e1);
				d1 += e1 * ddq + dq * (w2 * e0 - w0 * e2);
				d2 += e2 * ddq + dq * (w0 * e1 - w1 * e0);
				w0 += e0 * dq;
				w1 += e1 * dq;
				w2 += e2 * dq;
			}
		}
		w[i3 + j0] = w0;
		w[i3 + j1] = w1;
		w[i3 + j2] = w2;
		al[i3 + j0] = d0;
		al[i3 + j1] = d1;
		al[i3 + j2] = d2;
		acc[i3 + j0] = a0;
		acc[i3 + j1] = a1;
		acc[i3 + j2] = a2;
	}

	// Inward: each body's joint load from its own motion and its children's loads; Q along the joint's axis.
	// fa/na: the children's loads summed in each parent's axes, all zero between frames (cleared as they are used)
	for (let i = n - 1; i >= 0; i--) {
		const i3 = 3 * i,
			i9 = 9 * i;
		let fx = fa[i3],
			fy = fa[i3 + 1],
			fz = fa[i3 + 2];
		let tx = na[i3],
			ty = na[i3 + 1],
			tz = na[i3 + 2];
		fa[i3] = fa[i3 + 1] = fa[i3 + 2] = na[i3] = na[i3 + 1] = na[i3 + 2] = 0;
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

		// what the parent feels: this load turned into its axes (E·v) and moved to its origin, in components j0 j1 j2
		const code = planar[i];
		const j0 = ORDER[3 * code],
			j1 = ORDER[3 * code + 1],
			j2 = ORDER[3 * code + 2];
		const f0 = f[i3 + j0],
			f1 = f[i3 + j1],
			f2 = f[i3 + j2];
		const t0 = t[i3 + j0],
			t1 = t[i3 + j1],
			t2 = t[i3 + j2];
		let g0: number, g1: number, g2: number, n0: number, n1: number, n2: number;
		if (code !== 0) {
			const c = cs[2 * i],
				s = cs[2 * i + 1];
			g0 = f0;
			g1 = c * f1 - s * f2;
			g2 = s * f1 + c * f2;
			n0 = t0;
			n1 = c * t1 - s * t2;
			n2 = s * t1 + c * t2;
		} else {
			g0 = E[i9] * f0 + E[i9 + 1] * f1 + E[i9 + 2] * f2;
			g1 = E[i9 + 3] * f0 + E[i9 + 4] * f1 + E[i9 + 5] * f2;
			g2 = E[i9 + 6] * f0 + E[i9 + 7] * f1 + E[i9 + 8] * f2;
			n0 = E[i9] * t0 + E[i9 + 1] * t1 + E[i9 + 2] * t2;
			n1 = E[i9 + 3] * t0 + E[i9 + 4] * t1 + E[i9 + 5] * t2;
			n2 = E[i9 + 6] * t0 + E[i9 + 7] * t1 + E[i9 + 8] * t2;
		}
		if (anchorZero[i] === 0 || kind[i] === PRISMATIC) {
			const r0 = rp[i3 + j0],
				r1 = rp[i3 + j1],
				r2 = rp[i3 + j2];
			n0 += r1 * g2 - r2 * g1;
			n1 += r2 * g0 - r0 * g2;
			n2 += r0 * g1 - r1 * g0;
		}
		const p3 = 3 * parent[i];
		fa[p3 + j0] += g0;
		fa[p3 + j1] += g1;
		fa[p3 + j2] += g2;
		na[p3 + j0] += n0;
		na[p3 + j1] += n1;
		na[p3 + j2] += n2;
	}
}
