// Identities the equations of motion must satisfy (general mechanics, no outside numbers needed).
import { describe, expect, it } from 'vitest';
import {
	compileModel,
	inverseDynamics,
	inverseDynamicsBatch,
	forwardDynamics,
	forwardKinematics,
	massMatrix,
	bias,
	choleskyInPlace,
	createWorkspace,
	REVOLUTE,
	type ExternalLoad,
	type Vec3
} from '../../../src/lib/dynamics';
import { branchedChain, rng, uniform } from './fixtures';

const model = compileModel(branchedChain());
const n = model.n;
const G: Vec3 = [0.3, -9.78, 0.6];
const loads: ExternalLoad[] = [
	{ body: 3, point: [0.05, -0.02, 0.01], force: [4, -2, 1.5], torque: [0.2, 0, -0.1] },
	{ body: 5, point: [0, 0, 0], force: [0, 0, 0], torque: [0.1, 0.3, 0.2], frame: 'body' }
];
const r = rng(7);
const states = Array.from({ length: 25 }, () => ({
	q: uniform(r, -1.2, 1.2, n).map((v, i) => (model.kind[i] === REVOLUTE ? v : v / 10)),
	qd: uniform(r, -2, 2, n),
	qdd: uniform(r, -3, 3, n)
}));
const rel = (a: ArrayLike<number>, b: ArrayLike<number>) => {
	let num = 0,
		den = 0;
	for (let i = 0; i < a.length; i++) {
		num = Math.max(num, Math.abs(a[i] - b[i]));
		den = Math.max(den, Math.abs(b[i]));
	}
	return num / Math.max(den, 1e-300);
};

describe('mass matrix', () => {
	it('is symmetric and positive definite', () => {
		for (const s of states) {
			const M = massMatrix(model, s.q);
			for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) expect(M[i * n + j]).toBe(M[j * n + i]);
			expect(() => choleskyInPlace(M.slice(), n)).not.toThrow();
		}
	});

	it('with the bias reproduces inverse dynamics: M q̈ + c = Q', () => {
		for (const s of states) {
			const M = massMatrix(model, s.q);
			const c = bias(model, s.q, s.qd, { gravity: G, loads });
			const Q = inverseDynamics(model, s.q, s.qd, s.qdd, { gravity: G, loads }).Q;
			const Mq = Float64Array.from({ length: n }, (_, i) => s.qdd.reduce((acc, v, j) => acc + M[i * n + j] * v, c[i]));
			expect(rel(Mq, Q)).toBeLessThan(1e-12);
		}
	});
});

describe('forward and inverse dynamics', () => {
	it('inverseDynamics(q, q̇, forwardDynamics(q, q̇, Q)) = Q', () => {
		for (const s of states) {
			const Q = uniform(r, -20, 20, n);
			const qdd = forwardDynamics(model, s.q, s.qd, Q, { gravity: G, loads });
			const back = inverseDynamics(model, s.q, s.qd, qdd, { gravity: G, loads }).Q;
			expect(rel(back, Q)).toBeLessThan(1e-11);
		}
	});

	it('static case equals gravity torques computed by hand from the centres of mass', () => {
		for (const s of states.slice(0, 8)) {
			const pose = forwardKinematics(model, s.q);
			const { Q } = inverseDynamics(model, s.q, new Float64Array(n), new Float64Array(n), { gravity: G });
			// Holding still, joint i carries the weight of everything outboard: for a revolute joint the
			// moment about its axis of each outboard weight m_k g applied at c_k, with the sign reversed.
			for (let i = 0; i < n; i++) {
				const R = pose.rotation.subarray(9 * i, 9 * i + 9);
				const a = [0, 1, 2].map(
					(row) => R[3 * row] * model.axis[3 * i] + R[3 * row + 1] * model.axis[3 * i + 1] + R[3 * row + 2] * model.axis[3 * i + 2]
				);
				const p = pose.jointCentre.subarray(3 * i, 3 * i + 3);
				let hand = 0;
				for (let k = 0; k < n; k++) {
					let j = k;
					while (j >= 0 && j !== i) j = model.parent[j];
					if (j !== i) continue; // k is not outboard of i
					const m = model.mass[k];
					const F = [m * G[0], m * G[1], m * G[2]];
					const d = [0, 1, 2].map((e) => pose.com[3 * k + e] - p[e]);
					if (model.kind[i] === REVOLUTE) {
						const mom = [d[1] * F[2] - d[2] * F[1], d[2] * F[0] - d[0] * F[2], d[0] * F[1] - d[1] * F[0]];
						hand -= a[0] * mom[0] + a[1] * mom[1] + a[2] * mom[2];
					} else {
						hand -= a[0] * F[0] + a[1] * F[1] + a[2] * F[2];
					}
				}
				expect(Math.abs(Q[i] - hand)).toBeLessThan(1e-12 * Math.max(1, Math.abs(hand)));
			}
		}
	});

	it('the root reaction balances total weight and momentum change (Newton’s second law for the whole tree)', () => {
		const s = states[0];
		const res = inverseDynamics(model, s.q, new Float64Array(n), new Float64Array(n), { gravity: G });
		const M = forwardKinematics(model, s.q).totalMass;
		for (let e = 0; e < 3; e++) expect(res.forceWorld[e]).toBeCloseTo(-M * G[e], 10);
	});
});

describe('batch inverse dynamics', () => {
	it('equals frame-by-frame results, with reactions in body and ground axes', () => {
		const frames = states.length;
		const q = new Float64Array(frames * n),
			qd = new Float64Array(frames * n),
			qdd = new Float64Array(frames * n);
		states.forEach((s, k) => {
			q.set(s.q, k * n);
			qd.set(s.qd, k * n);
			qdd.set(s.qdd, k * n);
		});
		const ws = createWorkspace(model);
		const body = { Q: new Float64Array(frames * n), force: new Float64Array(frames * n * 3), torque: new Float64Array(frames * n * 3) };
		const world = { Q: new Float64Array(frames * n), force: new Float64Array(frames * n * 3), torque: new Float64Array(frames * n * 3) };
		inverseDynamicsBatch(model, frames, q, qd, qdd, body, { gravity: G, loads }, ws);
		inverseDynamicsBatch(model, frames, q, qd, qdd, world, { gravity: G, loads, reactionFrame: 'world' }, ws);
		states.forEach((s, k) => {
			const one = inverseDynamics(model, s.q, s.qd, s.qdd, { gravity: G, loads });
			expect(Array.from(body.Q.subarray(k * n, k * n + n))).toEqual(Array.from(one.Q));
			expect(Array.from(body.force.subarray(3 * k * n, 3 * (k + 1) * n))).toEqual(Array.from(one.force));
			expect(Array.from(world.torque.subarray(3 * k * n, 3 * (k + 1) * n))).toEqual(Array.from(one.torqueWorld));
		});
	});

	it('refuses arrays too short for the stated frames', () => {
		const a = new Float64Array(n);
		expect(() => inverseDynamicsBatch(model, 2, a, a, a, { Q: a })).toThrow(`q holds ${n} values; 2 frames × ${n} DOF need ${2 * n}`);
	});
});

describe('fast paths', () => {
	it('axis-aligned joints and zero anchors give the same numbers as the general formulas', async () => {
		const { scaleLimbs } = await import('../../../src/lib/anthropometry');
		const limbs = scaleLimbs({ sex: 'male', bodyMass: 80, stature: 1.8 }, 'de-leva-1996', [
			'right.leg',
			'left.leg',
			'right.arm',
			'left.arm'
		]);
		const fast = compileModel(limbs.model);
		expect(Array.from(fast.planar).filter((c) => c > 0).length).toBe(fast.n);
		// the same model with every shortcut switched off
		const general = {
			...fast,
			axisCode: new Uint8Array(fast.n),
			axisSign: new Float64Array(fast.n).fill(1),
			anchorZero: new Uint8Array(fast.n),
			planar: new Uint8Array(fast.n)
		};
		const rr = rng(11);
		for (let k = 0; k < 10; k++) {
			const q = uniform(rr, -1.5, 1.5, fast.n),
				qd = uniform(rr, -3, 3, fast.n),
				qdd = uniform(rr, -9, 9, fast.n);
			const a = inverseDynamics(fast, q, qd, qdd, { gravity: G });
			const b = inverseDynamics(general, q, qd, qdd, { gravity: G });
			expect(rel(a.Q, b.Q)).toBeLessThan(1e-14);
			expect(rel(a.forceWorld, b.forceWorld)).toBeLessThan(1e-14);
		}
	});
});
