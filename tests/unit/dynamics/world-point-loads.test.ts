// Loads through a point given in lab coordinates (pointFrame 'world', e.g. a centre of pressure) and loads that change
// from frame to frame in the batch (loadsAt). Outside sources: sympy.physics.mechanics (Kane's method) for a two-body
// chain with a world-point force (tests/reference/sympy_world_point.py); the same load given in body coordinates.
import { describe, expect, it } from 'vitest';
import {
	compileModel,
	createWorkspace,
	forwardKinematics,
	inverseDynamics,
	inverseDynamicsBatch,
	bias,
	type ExternalLoad,
	type Vec3
} from '../../../src/lib/dynamics';
import { loadSympyReference, type SympyModelFixture } from '../../reference/fixture';
import { body, skewInertia, axisAngle } from './fixtures';

interface Fixture extends SympyModelFixture {
	loadBody: number;
	states: { q: number[]; qd: number[]; qdd: number[]; point: Vec3; force: Vec3; torque: Vec3; Q: number[] }[];
}

const { fixture, regenerated } = loadSympyReference<Fixture>(
	'tests/reference/sympy_world_point.py',
	'tests/fixtures/dynamics/sympy-world-point.json'
);

/** A 3-D tree with a prismatic joint, skew axes, a fixed rotation and a branch (invented numbers, not anatomical). */
const tree = compileModel({
	bodies: [
		body({
			name: 'slide',
			parent: -1,
			joint: { type: 'prismatic', axis: [1, 0, 0] },
			mass: 0,
			inertia: skewInertia(0, 0, 0, [1, 0, 0], 0)
		}),
		body({
			name: 'a',
			parent: 0,
			joint: { type: 'revolute', axis: [0.2, 0.1, 1] },
			anchor: [0, 1, 0],
			mass: 5,
			com: [0, -0.2, 0.01],
			inertia: skewInertia(0.1, 0.02, 0.09, [1, 2, 3], 0.4)
		}),
		body({
			name: 'b',
			parent: 1,
			joint: { type: 'revolute', axis: [1, 0, 0] },
			anchor: [0, -0.4, 0],
			rotation: axisAngle([0, 1, 0.3], 0.5),
			mass: 3,
			com: [0.01, -0.2, 0],
			inertia: skewInertia(0.04, 0.005, 0.04, [3, 1, 1], 0.2)
		}),
		body({
			name: 'c',
			parent: 2,
			joint: { type: 'revolute', axis: [0, 0, 1] },
			anchor: [0, -0.42, 0],
			mass: 1.1,
			com: [0.08, 0, 0],
			inertia: skewInertia(0.002, 0.006, 0.006, [0, 0, 1], 0.1)
		}),
		body({
			name: 'd',
			parent: 1,
			joint: { type: 'revolute', axis: [0, 1, 0] },
			anchor: [0, 0, 0.2],
			mass: 2,
			com: [0, 0, 0.1],
			inertia: skewInertia(0.01, 0.01, 0.004, [1, 0, 0], 0)
		})
	]
});

const rel = (got: ArrayLike<number>, want: ArrayLike<number>) => {
	let d = 0,
		s = 1e-300;
	for (let i = 0; i < want.length; i++) {
		d = Math.max(d, Math.abs(got[i] - want[i]));
		s = Math.max(s, Math.abs(want[i]));
	}
	return d / s;
};

describe(`world-point loads against sympy (${regenerated ? 'regenerated now' : 'committed fixture'}: ${fixture.source})`, () => {
	const model = compileModel(fixture.model);
	fixture.states.forEach((s, k) => {
		it(`state ${k + 1}: Q within 1e-9 of Kane's equations`, () => {
			const load: ExternalLoad = {
				body: fixture.loadBody,
				point: s.point,
				force: s.force,
				torque: s.torque,
				frame: 'world',
				pointFrame: 'world'
			};
			const { Q } = inverseDynamics(model, s.q, s.qd, s.qdd, { gravity: fixture.gravity, loads: [load] });
			expect(rel(Q, s.Q)).toBeLessThan(1e-9);
		});
	});
});

describe('a world point is the body point that lies there', () => {
	const q = [0.12, 0.4, -0.7, 0.9, 0.3],
		qd = [0.5, -1.2, 2.0, 0.7, -0.4],
		qdd = [1.5, 3.0, -4.0, 2.2, 1.1];
	const P: Vec3 = [0.3, -0.05, 0.12];
	const force: Vec3 = [40, 650, -25],
		torque: Vec3 = [0.5, 3, -1];
	for (const b of [1, 2, 3, 4]) {
		it(`body ${b}: Q equals the same load with the point in body coordinates (1e-12)`, () => {
			const pose = forwardKinematics(tree, q);
			const R = pose.rotation.subarray(9 * b, 9 * b + 9);
			const o = pose.jointCentre.subarray(3 * b, 3 * b + 3);
			const d = [P[0] - o[0], P[1] - o[1], P[2] - o[2]];
			const local: Vec3 = [0, 1, 2].map((c) => R[c] * d[0] + R[3 + c] * d[1] + R[6 + c] * d[2]) as Vec3;
			// the force and torque in body axes too, for the body-frame variant
			const toBody = (v: Vec3) => [0, 1, 2].map((c) => R[c] * v[0] + R[3 + c] * v[1] + R[6 + c] * v[2]) as Vec3;
			const world = inverseDynamics(tree, q, qd, qdd, { loads: [{ body: b, point: P, force, torque, pointFrame: 'world' }] });
			const inBody = inverseDynamics(tree, q, qd, qdd, {
				loads: [{ body: b, point: local, force: toBody(force), torque: toBody(torque), frame: 'body' }]
			});
			expect(rel(world.Q, inBody.Q)).toBeLessThan(1e-12);
			expect(rel(world.forceWorld, inBody.forceWorld)).toBeLessThan(1e-12);
			// and bias (c of M q̈ + c = Q) agrees as well
			const c1 = bias(tree, q, qd, { loads: [{ body: b, point: P, force, torque, pointFrame: 'world' }] });
			const c2 = bias(tree, q, qd, { loads: [{ body: b, point: local, force, torque }] });
			expect(rel(c1, c2)).toBeLessThan(1e-12);
		});
	}
});

describe('inverseDynamicsBatch: loads per frame (loadsAt)', () => {
	const n = tree.n,
		frames = 7;
	const q = new Float64Array(frames * n),
		qd = new Float64Array(frames * n),
		qdd = new Float64Array(frames * n);
	for (let k = 0; k < frames * n; k++) {
		q[k] = Math.sin(0.7 * k);
		qd[k] = Math.cos(1.3 * k);
		qdd[k] = Math.sin(2.1 * k + 1);
	}
	const fixed: ExternalLoad = { body: 3, point: [0.1, 0, 0], force: [0, -20, 0] };
	const moving: ExternalLoad = { body: 2, point: [0, 0, 0], force: [0, 0, 0], torque: [0, 0, 0], pointFrame: 'world' };
	const own = [moving];
	const setFrame = (k: number) => {
		moving.point[0] = 0.1 * k;
		moving.point[1] = -0.02 * k;
		moving.force[1] = 100 * k;
		moving.force[0] = 10 - k;
		moving.torque![1] = 0.3 * k;
	};
	it('frame by frame equals inverseDynamics with that frame’s loads (1e-12), with and without fixed loads, none on odd frames', () => {
		for (const withFixed of [false, true]) {
			const out = { Q: new Float64Array(frames * n), force: new Float64Array(frames * n * 3) };
			inverseDynamicsBatch(
				tree,
				frames,
				q,
				qd,
				qdd,
				out,
				{
					reactionFrame: 'world',
					loads: withFixed ? [fixed] : undefined,
					loadsAt: (k) => {
						if (k % 2) return null;
						setFrame(k);
						return own;
					}
				},
				createWorkspace(tree)
			);
			for (let k = 0; k < frames; k++) {
				setFrame(k);
				const loads = [...(withFixed ? [fixed] : []), ...(k % 2 ? [] : [moving])];
				const one = inverseDynamics(tree, q.subarray(k * n, k * n + n), qd.subarray(k * n, k * n + n), qdd.subarray(k * n, k * n + n), {
					loads
				});
				expect(rel(out.Q.subarray(k * n, k * n + n), one.Q)).toBeLessThan(1e-12);
				expect(rel(out.force.subarray(3 * k * n, 3 * k * n + 3 * n), one.forceWorld)).toBeLessThan(1e-12);
			}
		}
	});
});
