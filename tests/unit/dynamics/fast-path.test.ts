// The tuned Newton–Euler passes (rnea-fast.ts, behind inverseDynamics and the batch) against the readable reference (rnea.ts,
// itself checked against sympy and closed forms in the other files) on random trees: both joint kinds, axes along ±X/±Y/±Z and skew,
// fixed rotations, joints at the parent's origin, massless links, loads in both frames, gravity in any direction.
import fs from 'node:fs';
import { describe, expect, it } from 'vitest';
import {
	compileModel,
	createWorkspace,
	inverseDynamics,
	inverseDynamicsBatch,
	PRISMATIC,
	type BodyInput,
	type ExternalLoad,
	type Model,
	type Vec3
} from '../../../src/lib/dynamics';
import { rneaFrame } from '../../../src/lib/dynamics/rnea';
import { axisAngle, body, diag, rng, skewInertia, uniform } from './fixtures';

const pick = <T>(r: () => number, xs: readonly T[]): T => xs[Math.floor(r() * xs.length)];
const vec = (r: () => number, lo: number, hi: number): Vec3 => Array.from(uniform(r, lo, hi, 3)) as Vec3;
const AXES: Vec3[] = [
	[1, 0, 0],
	[-1, 0, 0],
	[0, 1, 0],
	[0, -1, 0],
	[0, 0, 1],
	[0, 0, -1]
];

function randomTree(r: () => number): Model {
	const n = 3 + Math.floor(r() * 10);
	const parents = Array.from({ length: n }, (_, i) => (i === 0 || r() < 0.1 ? -1 : Math.floor(r() * i)));
	const bodies: BodyInput[] = parents.map((parent, i) => {
		const leaf = !parents.includes(i);
		const mass = leaf || r() < 0.7 ? 0.2 + 3 * r() : 0;
		return body({
			name: `b${i}`,
			parent,
			joint: { type: r() < 0.25 ? 'prismatic' : 'revolute', axis: r() < 0.5 ? pick(r, AXES) : vec(r, -1, 1) },
			anchor: r() < 0.4 ? [0, 0, 0] : vec(r, -0.3, 0.3),
			...(r() < 0.4 ? { rotation: axisAngle(vec(r, -1, 1), 3 * r()) } : {}),
			mass,
			com: vec(r, -0.2, 0.2),
			inertia: mass === 0 ? diag(0, 0, 0) : skewInertia(0.02 + 0.02 * r(), 0.02 + 0.02 * r(), 0.02 + 0.02 * r(), vec(r, -1, 1), 3 * r())
		});
	});
	return compileModel({ name: 'random tree', bodies });
}

function randomState(r: () => number, m: Model) {
	const range = (i: number) => (m.kind[i] === PRISMATIC ? 0.2 : Math.PI);
	return {
		q: Float64Array.from({ length: m.n }, (_, i) => range(i) * (2 * r() - 1)),
		qd: uniform(r, -3, 3, m.n),
		qdd: uniform(r, -10, 10, m.n)
	};
}

function randomLoads(r: () => number, m: Model): ExternalLoad[] {
	return [
		{ body: Math.floor(r() * m.n), point: vec(r, -0.2, 0.2), force: vec(r, -50, 50), torque: vec(r, -5, 5) },
		{ body: Math.floor(r() * m.n), point: vec(r, -0.2, 0.2), force: vec(r, -50, 50), frame: 'body' }
	];
}

/** Largest difference relative to the largest reference magnitude. */
const relErr = (got: ArrayLike<number>, want: ArrayLike<number>) =>
	Math.max(...Array.from(want, (v, i) => Math.abs(got[i] - v))) / Math.max(1e-300, ...Array.from(want, Math.abs));

/** The reference: Q and the body-axes reactions of one frame. */
function reference(m: Model, q: Float64Array, qd: Float64Array, qdd: Float64Array, gravity: Vec3, loads: ExternalLoad[] | null) {
	const ws = createWorkspace(m);
	const Q = new Float64Array(m.n);
	rneaFrame(m, ws, q, qd, qdd, 0, gravity, loads, Q, 0);
	return { Q, force: ws.f.slice(), torque: ws.t.slice() };
}

const r = rng(2024);
const trees = Array.from({ length: 60 }, () => randomTree(r));

describe('tuned Newton–Euler passes against the reference', () => {
	it('the random trees cover every special case of the tuned passes', () => {
		const all = (f: (m: Model, i: number) => boolean) => trees.some((m) => Array.from({ length: m.n }, (_, i) => f(m, i)).some(Boolean));
		for (const code of [1, 2, 3]) {
			expect(all((m, i) => m.planar[i] === code && m.axisSign[i] > 0)).toBe(true);
			expect(all((m, i) => m.planar[i] === code && m.axisSign[i] < 0)).toBe(true);
		}
		expect(all((m, i) => m.axisCode[i] !== 0 && m.planar[i] === 0 && m.kind[i] !== PRISMATIC)).toBe(true); // ±X/Y/Z after a fixed rotation
		expect(all((m, i) => m.anchorZero[i] === 1 && m.kind[i] !== PRISMATIC)).toBe(true);
		expect(all((m, i) => m.anchorZero[i] === 1 && m.kind[i] === PRISMATIC)).toBe(true);
		expect(all((m, i) => m.mass[i] === 0)).toBe(true);
		expect(all((m, i) => i > 0 && m.parent[i] < 0)).toBe(true); // a second root
	});

	it('give the same Q and reactions, with loads, to 1e-12 relative', () => {
		for (const m of trees) {
			for (let k = 0; k < 4; k++) {
				const { q, qd, qdd } = randomState(r, m);
				const gravity = vec(r, -10, 10);
				const loads = randomLoads(r, m);
				const want = reference(m, q, qd, qdd, gravity, loads);
				const got = inverseDynamics(m, q, qd, qdd, { gravity, loads });
				expect(relErr(got.Q, want.Q)).toBeLessThan(1e-12);
				expect(relErr(got.force, want.force)).toBeLessThan(1e-12);
				expect(relErr(got.torque, want.torque)).toBeLessThan(1e-12);
			}
		}
	});

	it('give the same Q and reactions over a batch without loads (plane rotations by cos q, sin q alone), to 1e-12 relative', () => {
		for (const m of trees) {
			const frames = 3,
				n = m.n;
			const q = new Float64Array(frames * n),
				qd = new Float64Array(frames * n),
				qdd = new Float64Array(frames * n);
			for (let k = 0; k < frames; k++) {
				const s = randomState(r, m);
				q.set(s.q, k * n);
				qd.set(s.qd, k * n);
				qdd.set(s.qdd, k * n);
			}
			const gravity = vec(r, -10, 10);
			const out = { Q: new Float64Array(frames * n), force: new Float64Array(3 * frames * n), torque: new Float64Array(3 * frames * n) };
			inverseDynamicsBatch(m, frames, q, qd, qdd, out, { gravity });
			for (let k = 0; k < frames; k++) {
				const at = (a: Float64Array, w: number) => a.subarray(w * k * n, w * (k + 1) * n);
				const want = reference(m, at(q, 1), at(qd, 1), at(qdd, 1), gravity, null);
				expect(relErr(at(out.Q, 1), want.Q)).toBeLessThan(1e-12);
				expect(relErr(at(out.force, 3), want.force)).toBeLessThan(1e-12);
				expect(relErr(at(out.torque, 3), want.torque)).toBeLessThan(1e-12);
			}
		}
	});
});

describe('reference passes on their own', () => {
	// Source: sympy.physics.mechanics (Kane's method), the committed fixture of tests/reference/sympy_chain.py
	// (sympy-reference.test.ts regenerates it and checks the public functions).
	const fx = JSON.parse(fs.readFileSync('tests/fixtures/dynamics/sympy-chain.json', 'utf8')) as {
		model: unknown;
		gravity: Vec3;
		externalLoads: ExternalLoad[];
		states: { q: number[]; qd: number[]; qdd: number[]; c: number[]; Q: number[] }[];
	};
	const m = compileModel(fx.model);
	it('match sympy’s Q and c on a branched 3-D tree with loads to 1e-9 relative', () => {
		for (const s of fx.states) {
			const [q, qd, qdd] = [s.q, s.qd, s.qdd].map((v) => Float64Array.from(v));
			expect(relErr(reference(m, q, qd, qdd, fx.gravity, fx.externalLoads).Q, s.Q)).toBeLessThan(1e-9);
			expect(relErr(reference(m, q, qd, new Float64Array(m.n), fx.gravity, fx.externalLoads).Q, s.c)).toBeLessThan(1e-9);
		}
	});
});
