// Joint-space mass matrix by the composite-rigid-body algorithm (Walker & Orin 1982), and the bias c(q, q̇).
import { PRISMATIC, STANDARD_GRAVITY, type Model } from './model';
import { placeBodies } from './kinematics';
import type { DynamicsOptions } from './rnea';
import { rneaFrameFast } from './rnea-fast';
import { addCross3, addScaled3, mul3 } from './vec';
import { createWorkspace, type Workspace } from './workspace';

/**
 * Writes M(q) (n × n, row-major, symmetric) into `M`. Spatial quantities are kept in ground axes about the
 * ground origin, where composite inertias add without transforms: M_ij = S_jᵀ · Ic_i · S_i for j = i and
 * every ancestor j of i.
 */
export function massMatrixInto(m: Model, q: ArrayLike<number>, M: Float64Array, ws: Workspace, o = 0): Float64Array {
	const { n, parent, kind, axis, mass, com, inertia } = m;
	placeBodies(m, ws, q, o);
	const { Rw, pw, cm, ch, cI, S } = ws;
	const c = ws.scratchCom; // centres of mass in ground coordinates
	for (let i = 0; i < n; i++) {
		const i3 = 3 * i,
			i9 = 9 * i,
			i6 = 6 * i;
		// joint axis z in ground axes; spatial axis [z; p × z] (revolute) or [0; z] (prismatic)
		if (kind[i] === PRISMATIC) {
			S[i6] = S[i6 + 1] = S[i6 + 2] = 0;
			mul3(Rw, i9, axis, i3, S, i6 + 3);
		} else {
			mul3(Rw, i9, axis, i3, S, i6);
			S[i6 + 3] = S[i6 + 4] = S[i6 + 5] = 0;
			addCross3(1, pw, i3, S, i6, S, i6 + 3);
		}
		// this body's own spatial inertia about the ground origin
		const mi = mass[i];
		mul3(Rw, i9, com, i3, c, i3);
		addScaled3(1, pw, i3, c, i3);
		const cx = c[i3],
			cy = c[i3 + 1],
			cz = c[i3 + 2];
		cm[i] = mi;
		ch[i3] = mi * cx;
		ch[i3 + 1] = mi * cy;
		ch[i3 + 2] = mi * cz;
		// R I Rᵀ + m (|c|² 1 − c cᵀ)
		const c2 = cx * cx + cy * cy + cz * cz;
		for (let a = 0; a < 3; a++) {
			const ra0 = Rw[i9 + 3 * a],
				ra1 = Rw[i9 + 3 * a + 1],
				ra2 = Rw[i9 + 3 * a + 2];
			const t0 = ra0 * inertia[i9] + ra1 * inertia[i9 + 3] + ra2 * inertia[i9 + 6];
			const t1 = ra0 * inertia[i9 + 1] + ra1 * inertia[i9 + 4] + ra2 * inertia[i9 + 7];
			const t2 = ra0 * inertia[i9 + 2] + ra1 * inertia[i9 + 5] + ra2 * inertia[i9 + 8];
			const ca = a === 0 ? cx : a === 1 ? cy : cz;
			for (let b = 0; b < 3; b++) {
				const cb = b === 0 ? cx : b === 1 ? cy : cz;
				cI[i9 + 3 * a + b] = t0 * Rw[i9 + 3 * b] + t1 * Rw[i9 + 3 * b + 1] + t2 * Rw[i9 + 3 * b + 2] + mi * ((a === b ? c2 : 0) - ca * cb);
			}
		}
	}
	// composite bodies: add each subtree into its parent, leaves first
	for (let i = n - 1; i > 0; i--) {
		const p = parent[i];
		if (p < 0) continue;
		cm[p] += cm[i];
		for (let k = 0; k < 3; k++) ch[3 * p + k] += ch[3 * i + k];
		for (let k = 0; k < 9; k++) cI[9 * p + k] += cI[9 * i + k];
	}
	M.fill(0, 0, n * n);
	for (let i = 0; i < n; i++) {
		const i3 = 3 * i,
			i6 = 6 * i,
			i9 = 9 * i;
		const wx = S[i6],
			wy = S[i6 + 1],
			wz = S[i6 + 2],
			vx = S[i6 + 3],
			vy = S[i6 + 4],
			vz = S[i6 + 5];
		const hx = ch[i3],
			hy = ch[i3 + 1],
			hz = ch[i3 + 2],
			mc = cm[i];
		// F = Ic S:  n = Ī ω + h × v ;  f = m v − h × ω
		const nx = cI[i9] * wx + cI[i9 + 1] * wy + cI[i9 + 2] * wz + (hy * vz - hz * vy);
		const ny = cI[i9 + 3] * wx + cI[i9 + 4] * wy + cI[i9 + 5] * wz + (hz * vx - hx * vz);
		const nz = cI[i9 + 6] * wx + cI[i9 + 7] * wy + cI[i9 + 8] * wz + (hx * vy - hy * vx);
		const fx = mc * vx - (hy * wz - hz * wy);
		const fy = mc * vy - (hz * wx - hx * wz);
		const fz = mc * vz - (hx * wy - hy * wx);
		M[i * n + i] = wx * nx + wy * ny + wz * nz + vx * fx + vy * fy + vz * fz;
		for (let j = parent[i]; j >= 0; j = parent[j]) {
			const j6 = 6 * j;
			const v = S[j6] * nx + S[j6 + 1] * ny + S[j6 + 2] * nz + S[j6 + 3] * fx + S[j6 + 4] * fy + S[j6 + 5] * fz;
			M[i * n + j] = v;
			M[j * n + i] = v;
		}
	}
	return M;
}

/** M(q) as a fresh n × n row-major array. */
export function massMatrix(m: Model, q: ArrayLike<number>, ws: Workspace = createWorkspace(m)): Float64Array {
	return massMatrixInto(m, q, new Float64Array(m.n * m.n), ws);
}

/** c(q, q̇): Coriolis, centripetal, gravity and external-load terms, so that M q̈ + c = Q. */
export function biasInto(
	m: Model,
	q: ArrayLike<number>,
	qd: ArrayLike<number>,
	c: Float64Array,
	opts: DynamicsOptions = {},
	ws: Workspace = createWorkspace(m),
	o = 0
): Float64Array {
	rneaFrameFast(m, ws, q, qd, null, o, opts.gravity ?? STANDARD_GRAVITY, opts.loads ?? null, c, 0);
	return c;
}

export function bias(m: Model, q: ArrayLike<number>, qd: ArrayLike<number>, opts: DynamicsOptions = {}, ws?: Workspace): Float64Array {
	return biasInto(m, q, qd, new Float64Array(m.n), opts, ws ?? createWorkspace(m));
}
