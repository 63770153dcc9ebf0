// Forward dynamics q̈ = M(q)⁻¹ (Q − c(q, q̇)) by a Cholesky solve, and the system's energy.
import { STANDARD_GRAVITY, type Model } from './model';
import { massMatrixInto, biasInto } from './mass-matrix';
import { placeBodies, centresOfMassInto } from './kinematics';
import { choleskyInPlace, choleskySolveInPlace } from './cholesky';
import type { DynamicsOptions } from './rnea';
import { createWorkspace, type Workspace } from './workspace';

/** Writes q̈ into `qdd` for the given generalised forces Q. */
export function forwardDynamicsInto(
	m: Model,
	q: ArrayLike<number>,
	qd: ArrayLike<number>,
	Q: ArrayLike<number>,
	qdd: Float64Array,
	opts: DynamicsOptions = {},
	ws: Workspace = createWorkspace(m)
): Float64Array {
	const n = m.n;
	const M = ws.scratchNN;
	const c = ws.scratchN;
	biasInto(m, q, qd, c, opts, ws);
	massMatrixInto(m, q, M, ws);
	choleskyInPlace(M, n);
	for (let i = 0; i < n; i++) qdd[i] = Q[i] - c[i];
	choleskySolveInPlace(M, n, qdd);
	return qdd;
}

export function forwardDynamics(
	m: Model,
	q: ArrayLike<number>,
	qd: ArrayLike<number>,
	Q: ArrayLike<number>,
	opts: DynamicsOptions = {},
	ws?: Workspace
): Float64Array {
	return forwardDynamicsInto(m, q, qd, Q, new Float64Array(m.n), opts, ws ?? createWorkspace(m));
}

/** Kinetic energy ½ q̇ᵀ M q̇ and gravitational potential energy −Σ mᵢ g·cᵢ (zero at the ground origin), J. */
export function energy(
	m: Model,
	q: ArrayLike<number>,
	qd: ArrayLike<number>,
	opts: Pick<DynamicsOptions, 'gravity'> = {},
	ws: Workspace = createWorkspace(m)
): { kinetic: number; potential: number; total: number } {
	const n = m.n;
	const M = ws.scratchNN;
	massMatrixInto(m, q, M, ws);
	let T = 0;
	for (let i = 0; i < n; i++) {
		let s = 0;
		for (let j = 0; j < n; j++) s += M[i * n + j] * qd[j];
		T += 0.5 * qd[i] * s;
	}
	placeBodies(m, ws, q);
	const com = ws.scratchCom;
	centresOfMassInto(m, ws, com);
	const [gx, gy, gz] = opts.gravity ?? STANDARD_GRAVITY;
	let V = 0;
	for (let i = 0; i < n; i++) V -= m.mass[i] * (gx * com[3 * i] + gy * com[3 * i + 1] + gz * com[3 * i + 2]);
	return { kinetic: T, potential: V, total: T + V };
}
