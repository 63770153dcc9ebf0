// Inverse dynamics by the recursive Newton–Euler method (Luh, Walker & Paul 1980), in body-fixed frames.
import { PRISMATIC, STANDARD_GRAVITY, type Model, type Vec3 } from './model';
import { createWorkspace, type ExternalLoad, type Workspace } from './workspace';

/**
 * Relative rotation E = R0 · Rot(axis, q) of every body (body → parent) and each body's origin in its
 * parent's frame, for the q at offset `o`. Rot is Rodrigues' formula for a right-handed rotation.
 */
export function relativeTransforms(m: Model, ws: Workspace, q: ArrayLike<number>, o: number, full = true): void {
	const { n, kind, axis, anchor, rot0, hasRot0, axisCode, axisSign, planar } = m;
	const E = ws.E;
	const rp = ws.rp;
	const cs = ws.cs;
	for (let i = 0; i < n; i++) {
		const i3 = 3 * i;
		const i9 = 9 * i;
		const qi = q[o + i];
		if (planar[i] !== 0 && !full) {
			// the Newton–Euler fast path needs only cos q and sin q; the origin stays at the anchor
			cs[2 * i] = Math.cos(qi);
			cs[2 * i + 1] = axisSign[i] * Math.sin(qi);
			rp[i3] = anchor[i3];
			rp[i3 + 1] = anchor[i3 + 1];
			rp[i3 + 2] = anchor[i3 + 2];
			continue;
		}
		if (kind[i] === PRISMATIC) {
			for (let k = 0; k < 9; k++) E[i9 + k] = rot0[i9 + k];
			const ax = axis[i3] * qi,
				ay = axis[i3 + 1] * qi,
				az = axis[i3 + 2] * qi;
			rp[i3] = anchor[i3] + E[i9] * ax + E[i9 + 1] * ay + E[i9 + 2] * az;
			rp[i3 + 1] = anchor[i3 + 1] + E[i9 + 3] * ax + E[i9 + 4] * ay + E[i9 + 5] * az;
			rp[i3 + 2] = anchor[i3 + 2] + E[i9 + 6] * ax + E[i9 + 7] * ay + E[i9 + 8] * az;
			continue;
		}
		const code = axisCode[i];
		const s = (code !== 0 ? axisSign[i] : 1) * Math.sin(qi),
			c = Math.cos(qi);
		cs[2 * i] = c;
		cs[2 * i + 1] = s;
		let r00 = 1,
			r01 = 0,
			r02 = 0,
			r10 = 0,
			r11 = 1,
			r12 = 0,
			r20 = 0,
			r21 = 0,
			r22 = 1;
		if (code === 3) {
			r00 = c;
			r01 = -s;
			r10 = s;
			r11 = c;
		} else if (code === 1) {
			r11 = c;
			r12 = -s;
			r21 = s;
			r22 = c;
		} else if (code === 2) {
			r00 = c;
			r02 = s;
			r20 = -s;
			r22 = c;
		} else {
			const x = axis[i3],
				y = axis[i3 + 1],
				z = axis[i3 + 2],
				v = 1 - c;
			r00 = c + x * x * v;
			r01 = x * y * v - z * s;
			r02 = x * z * v + y * s;
			r10 = y * x * v + z * s;
			r11 = c + y * y * v;
			r12 = y * z * v - x * s;
			r20 = z * x * v - y * s;
			r21 = z * y * v + x * s;
			r22 = c + z * z * v;
		}
		if (hasRot0[i]) {
			const a00 = rot0[i9],
				a01 = rot0[i9 + 1],
				a02 = rot0[i9 + 2];
			const a10 = rot0[i9 + 3],
				a11 = rot0[i9 + 4],
				a12 = rot0[i9 + 5];
			const a20 = rot0[i9 + 6],
				a21 = rot0[i9 + 7],
				a22 = rot0[i9 + 8];
			E[i9] = a00 * r00 + a01 * r10 + a02 * r20;
			E[i9 + 1] = a00 * r01 + a01 * r11 + a02 * r21;
			E[i9 + 2] = a00 * r02 + a01 * r12 + a02 * r22;
			E[i9 + 3] = a10 * r00 + a11 * r10 + a12 * r20;
			E[i9 + 4] = a10 * r01 + a11 * r11 + a12 * r21;
			E[i9 + 5] = a10 * r02 + a11 * r12 + a12 * r22;
			E[i9 + 6] = a20 * r00 + a21 * r10 + a22 * r20;
			E[i9 + 7] = a20 * r01 + a21 * r11 + a22 * r21;
			E[i9 + 8] = a20 * r02 + a21 * r12 + a22 * r22;
		} else {
			E[i9] = r00;
			E[i9 + 1] = r01;
			E[i9 + 2] = r02;
			E[i9 + 3] = r10;
			E[i9 + 4] = r11;
			E[i9 + 5] = r12;
			E[i9 + 6] = r20;
			E[i9 + 7] = r21;
			E[i9 + 8] = r22;
		}
		rp[i3] = anchor[i3];
		rp[i3 + 1] = anchor[i3 + 1];
		rp[i3 + 2] = anchor[i3 + 2];
	}
}

/** World orientation of every body (body → world) from the relative rotations already in ws.E. */
export function worldRotations(m: Model, ws: Workspace): void {
	const { n, parent } = m;
	const E = ws.E,
		R = ws.Rw;
	for (let i = 0; i < n; i++) {
		const i9 = 9 * i;
		const p = parent[i];
		if (p < 0) {
			for (let k = 0; k < 9; k++) R[i9 + k] = E[i9 + k];
			continue;
		}
		const p9 = 9 * p;
		for (let r = 0; r < 3; r++) {
			const b0 = R[p9 + 3 * r],
				b1 = R[p9 + 3 * r + 1],
				b2 = R[p9 + 3 * r + 2];
			R[i9 + 3 * r] = b0 * E[i9] + b1 * E[i9 + 3] + b2 * E[i9 + 6];
			R[i9 + 3 * r + 1] = b0 * E[i9 + 1] + b1 * E[i9 + 4] + b2 * E[i9 + 7];
			R[i9 + 3 * r + 2] = b0 * E[i9 + 2] + b1 * E[i9 + 5] + b2 * E[i9 + 8];
		}
	}
}

/** Reduces external loads to each body's joint point in body axes (needs ws.Rw for world-frame loads). */
function reduceLoads(m: Model, ws: Workspace, loads: readonly ExternalLoad[]): void {
	ws.loadF.fill(0);
	ws.loadT.fill(0);
	const R = ws.Rw;
	for (const L of loads) {
		const b = L.body,
			b3 = 3 * b,
			b9 = 9 * b;
		// index access, not destructuring: this runs once per frame and must not allocate
		const F = L.force,
			T = L.torque;
		let fx = F[0],
			fy = F[1],
			fz = F[2];
		let tx = T ? T[0] : 0,
			ty = T ? T[1] : 0,
			tz = T ? T[2] : 0;
		if ((L.frame ?? 'world') === 'world') {
			// body axes = Rᵀ · world axes
			const gx = R[b9] * fx + R[b9 + 3] * fy + R[b9 + 6] * fz;
			const gy = R[b9 + 1] * fx + R[b9 + 4] * fy + R[b9 + 7] * fz;
			const gz = R[b9 + 2] * fx + R[b9 + 5] * fy + R[b9 + 8] * fz;
			const hx = R[b9] * tx + R[b9 + 3] * ty + R[b9 + 6] * tz;
			const hy = R[b9 + 1] * tx + R[b9 + 4] * ty + R[b9 + 7] * tz;
			const hz = R[b9 + 2] * tx + R[b9 + 5] * ty + R[b9 + 8] * tz;
			fx = gx;
			fy = gy;
			fz = gz;
			tx = hx;
			ty = hy;
			tz = hz;
		}
		const px = L.point[0],
			py = L.point[1],
			pz = L.point[2];
		ws.loadF[b3] += fx;
		ws.loadF[b3 + 1] += fy;
		ws.loadF[b3 + 2] += fz;
		ws.loadT[b3] += tx + py * fz - pz * fy;
		ws.loadT[b3 + 1] += ty + pz * fx - px * fz;
		ws.loadT[b3 + 2] += tz + px * fy - py * fx;
	}
}

/**
 * One frame of recursive Newton–Euler. Reads q, q̇, q̈ at offset `o`, writes Q at `Q[qo…qo+n)`, and leaves
 * each joint's reaction (parent on body, at the joint point, body axes) in ws.f / ws.t.
 * Gravity enters as an upward acceleration of the ground, so the reactions include it.
 */
export function rneaFrame(
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
	/** Also fill ws.E for plane-rotation joints (needed afterwards for world rotations). */
	fullTransforms = false
): void {
	const { n, parent, kind, axis, mass, com, inertia, anchorZero, planar, axisSign } = m;
	const { E, rp, w, al, acc, fa, na, f, t, cs } = ws;
	const hasLoads = loads !== null && loads.length > 0;
	relativeTransforms(m, ws, q, o, hasLoads || fullTransforms);
	if (hasLoads) {
		worldRotations(m, ws);
		reduceLoads(m, ws, loads);
	}
	// fa/na are all zero here: the inward pass clears each body's sums as it consumes them.
	const gx = -gravity[0],
		gy = -gravity[1],
		gz = -gravity[2];

	// Outward pass: velocities and accelerations, parent before child.
	for (let i = 0; i < n; i++) {
		const i3 = 3 * i,
			i9 = 9 * i,
			p = parent[i];
		let wpx = 0,
			wpy = 0,
			wpz = 0,
			apx = 0,
			apy = 0,
			apz = 0,
			lx = gx,
			ly = gy,
			lz = gz;
		const rx = rp[i3],
			ry = rp[i3 + 1],
			rz = rp[i3 + 2];
		if (p >= 0) {
			const p3 = 3 * p;
			wpx = w[p3];
			wpy = w[p3 + 1];
			wpz = w[p3 + 2];
			apx = al[p3];
			apy = al[p3 + 1];
			apz = al[p3 + 2];
			if (anchorZero[i] === 1 && kind[i] !== PRISMATIC) {
				lx = acc[p3];
				ly = acc[p3 + 1];
				lz = acc[p3 + 2];
			} else {
			// acceleration of the point r in the parent: a_p + α_p × r + ω_p × (ω_p × r)
			const ux = wpy * rz - wpz * ry,
				uy = wpz * rx - wpx * rz,
				uz = wpx * ry - wpy * rx;
			lx = acc[p3] + (apy * rz - apz * ry) + (wpy * uz - wpz * uy);
			ly = acc[p3 + 1] + (apz * rx - apx * rz) + (wpz * ux - wpx * uz);
			lz = acc[p3 + 2] + (apx * ry - apy * rx) + (wpx * uy - wpy * ux);
			}
		}
		const dq0 = qd === null ? 0 : qd[o + i];
		const ddq0 = qdd === null ? 0 : qdd[o + i];
		let wx: number, wy: number, wz: number, ax: number, ay: number, az: number, vx: number, vy: number, vz: number;
		const code = planar[i];
		if (code !== 0) {
			// Revolute about a body axis with no fixed rotation: Eᵀ is a plane rotation, and
			// α = Eᵀα_p + e q̈ + (Eᵀω_p) × e q̇ has a cross product with a unit vector.
			const c = cs[2 * i],
				s = cs[2 * i + 1];
			// about −e the rates enter with the opposite sign
			const dq = axisSign[i] * dq0,
				ddq = axisSign[i] * ddq0;
			if (code === 3) {
				wx = c * wpx + s * wpy;
				wy = c * wpy - s * wpx;
				wz = wpz + dq;
				ax = c * apx + s * apy + dq * wy;
				ay = c * apy - s * apx - dq * wx;
				az = apz + ddq;
				vx = c * lx + s * ly;
				vy = c * ly - s * lx;
				vz = lz;
			} else if (code === 1) {
				wy = c * wpy + s * wpz;
				wz = c * wpz - s * wpy;
				wx = wpx + dq;
				ay = c * apy + s * apz + dq * wz;
				az = c * apz - s * apy - dq * wy;
				ax = apx + ddq;
				vy = c * ly + s * lz;
				vz = c * lz - s * ly;
				vx = lx;
			} else {
				wz = c * wpz + s * wpx;
				wx = c * wpx - s * wpz;
				wy = wpy + dq;
				az = c * apz + s * apx + dq * wx;
				ax = c * apx - s * apz - dq * wz;
				ay = apy + ddq;
				vz = c * lz + s * lx;
				vx = c * lx - s * lz;
				vy = ly;
			}
		} else {
		const dq = dq0,
			ddq = ddq0;
		const e0 = E[i9],
			e1 = E[i9 + 1],
			e2 = E[i9 + 2],
			e3 = E[i9 + 3],
			e4 = E[i9 + 4],
			e5 = E[i9 + 5],
			e6 = E[i9 + 6],
			e7 = E[i9 + 7],
			e8 = E[i9 + 8];
		// parent quantities in body axes: Eᵀ·v
		wx = e0 * wpx + e3 * wpy + e6 * wpz;
		wy = e1 * wpx + e4 * wpy + e7 * wpz;
		wz = e2 * wpx + e5 * wpy + e8 * wpz;
		ax = e0 * apx + e3 * apy + e6 * apz;
		ay = e1 * apx + e4 * apy + e7 * apz;
		az = e2 * apx + e5 * apy + e8 * apz;
		vx = e0 * lx + e3 * ly + e6 * lz;
		vy = e1 * lx + e4 * ly + e7 * lz;
		vz = e2 * lx + e5 * ly + e8 * lz;
		const sx = axis[i3],
			sy = axis[i3 + 1],
			sz = axis[i3 + 2];
		if (kind[i] === PRISMATIC) {
			// sliding adds 2 ω × s q̇ + s q̈ to the origin's acceleration
			vx += 2 * dq * (wy * sz - wz * sy) + sx * ddq;
			vy += 2 * dq * (wz * sx - wx * sz) + sy * ddq;
			vz += 2 * dq * (wx * sy - wy * sx) + sz * ddq;
		} else {
			// α = Eᵀα_p + s q̈ + (Eᵀω_p) × s q̇ ;  ω = Eᵀω_p + s q̇
			ax += sx * ddq + dq * (wy * sz - wz * sy);
			ay += sy * ddq + dq * (wz * sx - wx * sz);
			az += sz * ddq + dq * (wx * sy - wy * sx);
			wx += sx * dq;
			wy += sy * dq;
			wz += sz * dq;
		}
		}
		w[i3] = wx;
		w[i3 + 1] = wy;
		w[i3 + 2] = wz;
		al[i3] = ax;
		al[i3 + 1] = ay;
		al[i3 + 2] = az;
		acc[i3] = vx;
		acc[i3 + 1] = vy;
		acc[i3 + 2] = vz;
	}

	// Inward pass: forces, child before parent.
	for (let i = n - 1; i >= 0; i--) {
		const i3 = 3 * i,
			i9 = 9 * i,
			p = parent[i];
		let fx = fa[i3],
			fy = fa[i3 + 1],
			fz = fa[i3 + 2];
		let tx = na[i3],
			ty = na[i3 + 1],
			tz = na[i3 + 2];
		fa[i3] = fa[i3 + 1] = fa[i3 + 2] = 0;
		na[i3] = na[i3 + 1] = na[i3 + 2] = 0;
		const mi = mass[i];
		if (mi !== 0) {
			const wx = w[i3],
				wy = w[i3 + 1],
				wz = w[i3 + 2];
			const ax = al[i3],
				ay = al[i3 + 1],
				az = al[i3 + 2];
			const cx = com[i3],
				cy = com[i3 + 1],
				cz = com[i3 + 2];
			// COM acceleration: a + α × c + ω × (ω × c)
			const ux = wy * cz - wz * cy,
				uy = wz * cx - wx * cz,
				uz = wx * cy - wy * cx;
			const Fx = mi * (acc[i3] + (ay * cz - az * cy) + (wy * uz - wz * uy));
			const Fy = mi * (acc[i3 + 1] + (az * cx - ax * cz) + (wz * ux - wx * uz));
			const Fz = mi * (acc[i3 + 2] + (ax * cy - ay * cx) + (wx * uy - wy * ux));
			const I0 = inertia[i9],
				I1 = inertia[i9 + 1],
				I2 = inertia[i9 + 2],
				I4 = inertia[i9 + 4],
				I5 = inertia[i9 + 5],
				I8 = inertia[i9 + 8];
			// N = I α + ω × (I ω), about the COM
			const hx = I0 * wx + I1 * wy + I2 * wz,
				hy = I1 * wx + I4 * wy + I5 * wz,
				hz = I2 * wx + I5 * wy + I8 * wz;
			const Nx = I0 * ax + I1 * ay + I2 * az + (wy * hz - wz * hy);
			const Ny = I1 * ax + I4 * ay + I5 * az + (wz * hx - wx * hz);
			const Nz = I2 * ax + I5 * ay + I8 * az + (wx * hy - wy * hx);
			fx += Fx;
			fy += Fy;
			fz += Fz;
			tx += Nx + (cy * Fz - cz * Fy);
			ty += Ny + (cz * Fx - cx * Fz);
			tz += Nz + (cx * Fy - cy * Fx);
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
		const sx = axis[i3],
			sy = axis[i3 + 1],
			sz = axis[i3 + 2];
		Q[qo + i] = kind[i] === PRISMATIC ? sx * fx + sy * fy + sz * fz : sx * tx + sy * ty + sz * tz;
		if (p >= 0) {
			const p3 = 3 * p;
			// the child's joint load, moved into the parent's axes and about the parent's origin
			let gx2: number, gy2: number, gz2: number;
			const code = planar[i];
			if (code !== 0) {
				const c = cs[2 * i],
					s = cs[2 * i + 1];
				if (code === 3) {
					gx2 = c * fx - s * fy;
					gy2 = s * fx + c * fy;
					gz2 = fz;
					na[p3] += c * tx - s * ty;
					na[p3 + 1] += s * tx + c * ty;
					na[p3 + 2] += tz;
				} else if (code === 1) {
					gx2 = fx;
					gy2 = c * fy - s * fz;
					gz2 = s * fy + c * fz;
					na[p3] += tx;
					na[p3 + 1] += c * ty - s * tz;
					na[p3 + 2] += s * ty + c * tz;
				} else {
					gx2 = c * fx + s * fz;
					gy2 = fy;
					gz2 = c * fz - s * fx;
					na[p3] += c * tx + s * tz;
					na[p3 + 1] += ty;
					na[p3 + 2] += c * tz - s * tx;
				}
			} else {
				gx2 = E[i9] * fx + E[i9 + 1] * fy + E[i9 + 2] * fz;
				gy2 = E[i9 + 3] * fx + E[i9 + 4] * fy + E[i9 + 5] * fz;
				gz2 = E[i9 + 6] * fx + E[i9 + 7] * fy + E[i9 + 8] * fz;
				na[p3] += E[i9] * tx + E[i9 + 1] * ty + E[i9 + 2] * tz;
				na[p3 + 1] += E[i9 + 3] * tx + E[i9 + 4] * ty + E[i9 + 5] * tz;
				na[p3 + 2] += E[i9 + 6] * tx + E[i9 + 7] * ty + E[i9 + 8] * tz;
			}
			fa[p3] += gx2;
			fa[p3 + 1] += gy2;
			fa[p3 + 2] += gz2;
			if (anchorZero[i] !== 1 || kind[i] === PRISMATIC) {
				const rx = rp[i3],
					ry = rp[i3 + 1],
					rz = rp[i3 + 2];
				na[p3] += ry * gz2 - rz * gy2;
				na[p3 + 1] += rz * gx2 - rx * gz2;
				na[p3 + 2] += rx * gy2 - ry * gx2;
			}
		}
	}
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
	rneaFrame(m, ws, q, qd, qdd, 0, opts.gravity ?? STANDARD_GRAVITY, opts.loads ?? null, Q, 0, true);
	worldRotations(m, ws);
	const force = ws.f.slice(),
		torque = ws.t.slice();
	const forceWorld = new Float64Array(3 * m.n),
		torqueWorld = new Float64Array(3 * m.n);
	toWorld(ws.Rw, force, forceWorld, m.n);
	toWorld(ws.Rw, torque, torqueWorld, m.n);
	return { Q, force, torque, forceWorld, torqueWorld };
}

function toWorld(R: Float64Array, v: Float64Array, out: Float64Array, n: number, vo = 0, oo = 0): void {
	for (let i = 0; i < n; i++) {
		const i9 = 9 * i,
			x = v[vo + 3 * i],
			y = v[vo + 3 * i + 1],
			z = v[vo + 3 * i + 2];
		out[oo + 3 * i] = R[i9] * x + R[i9 + 1] * y + R[i9 + 2] * z;
		out[oo + 3 * i + 1] = R[i9 + 3] * x + R[i9 + 4] * y + R[i9 + 5] * z;
		out[oo + 3 * i + 2] = R[i9 + 6] * x + R[i9 + 7] * y + R[i9 + 8] * z;
	}
}

export interface BatchOutput {
	/** frames × n generalised forces (row per frame). */
	Q: Float64Array;
	/** Optional frames × n × 3 reactions; `reactionFrame` says whose axes. */
	force?: Float64Array;
	torque?: Float64Array;
}

/**
 * Inverse dynamics over a whole recording. q, qd, qdd are frames × n, row per frame (Float64Array).
 * Allocates nothing per frame; pass `ws` to reuse a workspace across calls. Loads, if any, apply to every frame.
 */
export function inverseDynamicsBatch(
	m: Model,
	frames: number,
	q: Float64Array,
	qd: Float64Array,
	qdd: Float64Array,
	out: BatchOutput,
	opts: DynamicsOptions & { reactionFrame?: 'body' | 'world' } = {},
	ws: Workspace = createWorkspace(m)
): BatchOutput {
	const n = m.n;
	for (const [name, arr] of [['q', q], ['qd', qd], ['qdd', qdd], ['Q', out.Q]] as const) {
		if (arr.length < frames * n) throw new RangeError(`${name} holds ${arr.length} values; ${frames} frames × ${n} DOF need ${frames * n}`);
	}
	const g = opts.gravity ?? STANDARD_GRAVITY;
	const loads = opts.loads && opts.loads.length ? opts.loads : null;
	const world = opts.reactionFrame === 'world';
	for (let k = 0; k < frames; k++) {
		const o = k * n;
		rneaFrame(m, ws, q, qd, qdd, o, g, loads, out.Q, o, world);
		if (out.force || out.torque) {
			if (world) {
				if (!loads) worldRotations(m, ws);
				if (out.force) toWorld(ws.Rw, ws.f, out.force, n, 0, 3 * o);
				if (out.torque) toWorld(ws.Rw, ws.t, out.torque, n, 0, 3 * o);
			} else {
				if (out.force) out.force.set(ws.f, 3 * o);
				if (out.torque) out.torque.set(ws.t, 3 * o);
			}
		}
	}
	return out;
}
