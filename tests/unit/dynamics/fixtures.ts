// Test models for the engine: closed-form cases and an invented 3-D branched chain (not anatomical data).
import type { BodyInput, ModelInput, Mat3, Vec3 } from '../../../src/lib/dynamics';

export const diag = (a: number, b: number, c: number): Mat3 => [
	[a, 0, 0],
	[0, b, 0],
	[0, 0, c]
];

export function body(p: Partial<BodyInput> & Pick<BodyInput, 'name' | 'parent'>): BodyInput {
	return {
		joint: { type: 'revolute', axis: [0, 0, 1] },
		anchor: [0, 0, 0],
		mass: 1,
		com: [0, 0, 0],
		inertia: diag(0.01, 0.01, 0.01),
		...p
	};
}

/** Rotation matrix (row-major) from a unit axis and an angle, by Rodrigues' formula. */
export function axisAngle(axis: Vec3, angle: number): Mat3 {
	const n = Math.hypot(...axis);
	const [x, y, z] = axis.map((v) => v / n);
	const c = Math.cos(angle),
		s = Math.sin(angle),
		v = 1 - c;
	return [
		[c + x * x * v, x * y * v - z * s, x * z * v + y * s],
		[y * x * v + z * s, c + y * y * v, y * z * v - x * s],
		[z * x * v - y * s, z * y * v + x * s, c + z * z * v]
	];
}

/** A symmetric positive-definite inertia Rᵀ diag(a,b,c) R with off-diagonal terms. */
export function skewInertia(a: number, b: number, c: number, axis: Vec3, angle: number): Mat3 {
	const R = axisAngle(axis, angle);
	const D = [a, b, c];
	return [0, 1, 2].map((i) => [0, 1, 2].map((j) => R[0][i] * D[0] * R[0][j] + R[1][i] * D[1] * R[1][j] + R[2][i] * D[2] * R[2][j])) as Mat3;
}

type ChainRow = [
	name: string,
	parent: number,
	joint: BodyInput['joint']['type'],
	axis: Vec3,
	anchor: Vec3,
	mass: number,
	com: Vec3,
	/** skewInertia's principal moments, axis and angle */
	inertia: [a: number, b: number, c: number, axis: Vec3, angle: number]
];

const CHAIN: ChainRow[] = [
	['b0', -1, 'revolute', [0.2, 0.9, 0.1], [0.05, 0.1, -0.02], 3.2, [0.02, -0.15, 0.03], [0.03, 0.035, 0.012, [1, 2, 3], 0.7]],
	['b1', 0, 'revolute', [1, 0.3, -0.2], [0.01, -0.3, 0.02], 2.1, [0.01, -0.12, 0.04], [0.02, 0.022, 0.006, [2, -1, 1], 1.1]],
	['b2', 1, 'prismatic', [0.1, -1, 0.2], [0.02, -0.25, 0], 1.4, [0.03, -0.05, 0.01], [0.004, 0.005, 0.002, [0, 1, 1], 0.3]],
	['b3', 2, 'revolute', [0.3, 0.1, 1], [0, -0.1, 0.03], 0.8, [0.06, -0.02, 0.01], [0.001, 0.0015, 0.0012, [1, 1, 0], 0.9]],
	['b4', 1, 'revolute', [-0.4, 0.2, 1], [-0.05, -0.1, 0.06], 1.9, [-0.08, -0.1, 0.02], [0.01, 0.012, 0.004, [1, -2, 0.5], 0.5]],
	['b5', 4, 'revolute', [0, 1, 0.3], [-0.2, -0.15, 0], 0.6, [-0.04, -0.05, 0.02], [0.0008, 0.0009, 0.0003, [0.2, 0.3, 1], 1.3]]
];
/** The bodies with a fixed rotation in their parent: axisAngle's axis and angle. */
const CHAIN_ROTATIONS: Record<string, [axis: Vec3, angle: number]> = { b1: [[0.3, -1, 0.5], 0.4], b4: [[1, 0.2, 0.1], -0.6] };

/** A 3-D chain of six bodies with one branch, skew axes, offset COMs, full inertias, one prismatic joint. */
export function branchedChain(): ModelInput {
	return {
		name: 'test chain',
		bodies: CHAIN.map(([name, parent, type, axis, anchor, mass, com, [a, b, c, inertiaAxis, inertiaAngle]]) =>
			body({
				name,
				parent,
				joint: { type, axis },
				anchor,
				...(CHAIN_ROTATIONS[name] && { rotation: axisAngle(...CHAIN_ROTATIONS[name]) }),
				mass,
				com,
				inertia: skewInertia(a, b, c, inertiaAxis, inertiaAngle)
			})
		)
	};
}

/** Deterministic pseudo-random numbers (mulberry32), so failures reproduce. */
export function rng(seed: number): () => number {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

export const uniform = (r: () => number, lo: number, hi: number, n: number) => Float64Array.from({ length: n }, () => lo + (hi - lo) * r());
