// Forward kinematics: every body's orientation and joint point, centres of mass, and the whole tree's centre of mass.
import type { Model, Vec3 } from './model';
import { relativeTransforms, worldRotations } from './joints';
import { createWorkspace, type Workspace } from './workspace';

/** Fills ws.Rw (body → world rotations) and ws.pw (world joint points) for the q at offset `o`. */
export function placeBodies(m: Model, ws: Workspace, q: ArrayLike<number>, o = 0): void {
	relativeTransforms(m, ws, q, o);
	worldRotations(m, ws);
	worldOrigins(m, ws);
}

/** World position of every body's origin, its joint point (ws.pw), from this frame's joint transforms (ws.rp) and world rotations (ws.Rw). */
export function worldOrigins(m: Model, ws: Workspace): void {
	const { n, parent } = m;
	const { rp, Rw, pw } = ws;
	for (let i = 0; i < n; i++) {
		const i3 = 3 * i,
			p = parent[i];
		const rx = rp[i3],
			ry = rp[i3 + 1],
			rz = rp[i3 + 2];
		if (p < 0) {
			pw[i3] = rx;
			pw[i3 + 1] = ry;
			pw[i3 + 2] = rz;
			continue;
		}
		const p3 = 3 * p,
			p9 = 9 * p;
		pw[i3] = pw[p3] + Rw[p9] * rx + Rw[p9 + 1] * ry + Rw[p9 + 2] * rz;
		pw[i3 + 1] = pw[p3 + 1] + Rw[p9 + 3] * rx + Rw[p9 + 4] * ry + Rw[p9 + 5] * rz;
		pw[i3 + 2] = pw[p3 + 2] + Rw[p9 + 6] * rx + Rw[p9 + 7] * ry + Rw[p9 + 8] * rz;
	}
}

export interface Pose {
	/** n × 9 row-major rotations, body axes → ground axes. */
	rotation: Float64Array;
	/** n × 3 joint centres (each body's origin) in ground coordinates, m. */
	jointCentre: Float64Array;
	/** n × 3 centres of mass in ground coordinates, m. */
	com: Float64Array;
	/** Whole-tree centre of mass (ground coordinates) and total mass. */
	totalCom: Vec3;
	totalMass: number;
}

/** World centres of mass (n × 3) of the bodies placed by placeBodies(); returns the total mass. */
export function centresOfMassInto(m: Model, ws: Workspace, out: Float64Array): number {
	const R = ws.Rw;
	let M = 0;
	for (let i = 0; i < m.n; i++) {
		const i3 = 3 * i,
			i9 = 9 * i;
		const cx = m.com[i3],
			cy = m.com[i3 + 1],
			cz = m.com[i3 + 2];
		out[i3] = ws.pw[i3] + R[i9] * cx + R[i9 + 1] * cy + R[i9 + 2] * cz;
		out[i3 + 1] = ws.pw[i3 + 1] + R[i9 + 3] * cx + R[i9 + 4] * cy + R[i9 + 5] * cz;
		out[i3 + 2] = ws.pw[i3 + 2] + R[i9 + 6] * cx + R[i9 + 7] * cy + R[i9 + 8] * cz;
		M += m.mass[i];
	}
	return M;
}

export function forwardKinematics(m: Model, q: ArrayLike<number>, ws: Workspace = createWorkspace(m)): Pose {
	placeBodies(m, ws, q);
	const n = m.n;
	const com = new Float64Array(3 * n);
	const M = centresOfMassInto(m, ws, com);
	let sx = 0,
		sy = 0,
		sz = 0;
	for (let i = 0; i < n; i++) {
		sx += m.mass[i] * com[3 * i];
		sy += m.mass[i] * com[3 * i + 1];
		sz += m.mass[i] * com[3 * i + 2];
	}
	return {
		rotation: ws.Rw.slice(),
		jointCentre: ws.pw.slice(),
		com,
		totalCom: M > 0 ? [sx / M, sy / M, sz / M] : [0, 0, 0],
		totalMass: M
	};
}
