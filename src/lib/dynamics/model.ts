// Model format of the multibody engine: the zod schema that validates a tree of bodies, and its compiled typed-array form.
import { z } from 'zod';
import { checkRotation } from './rotation';

export type Vec3 = [number, number, number];
export type Mat3 = [Vec3, Vec3, Vec3];

const finite = z.number({ error: 'must be a finite number' }).refine(Number.isFinite, 'must be a finite number');
const vec3 = z.tuple([finite, finite, finite], { error: 'must be three numbers [x, y, z]' });
const mat3 = z.tuple([vec3, vec3, vec3], { error: 'must be a 3×3 array of numbers' });

/**
 * A rotation matrix as typed (row-major): accepted within ROTATION_TOLERANCE of orthonormal with determinant > 0,
 * and replaced by the nearest proper rotation (polar decomposition), so 6-decimal entries work; otherwise refused
 * with the size of the error, the tolerance, and whether the determinant is negative (rotation.ts).
 */
export const rotationSchema = mat3
	.superRefine((R, ctx) => {
		const c = checkRotation(R as Mat3);
		if (!c.ok) ctx.addIssue({ code: 'custom', message: c.message });
	})
	.transform((R) => {
		const c = checkRotation(R as Mat3);
		return (c.ok ? c.rotation : R) as Mat3;
	});

/**
 * One rigid body and the one-DOF joint that joins it to its parent.
 * Frames: the body frame's origin is the joint point. `anchor` is that point in the parent's frame (the ground
 * frame for parent −1); `rotation` (optional, row-major 3×3) maps body-frame coordinates to parent-frame
 * coordinates at q = 0; `axis` is given in the body frame. All SI: m, kg, kg·m², rad.
 */
export const bodySchema = z.object({
	name: z.string().min(1, 'must not be empty'),
	parent: z.number().int('must be an integer'),
	joint: z.object({
		type: z.enum(['revolute', 'prismatic'], { error: 'must be "revolute" or "prismatic"' }),
		axis: vec3
	}),
	anchor: vec3,
	rotation: rotationSchema.optional(),
	mass: finite.refine((m) => m >= 0, 'must not be negative'),
	com: vec3,
	/** Inertia tensor about the centre of mass, body-frame axes: angular momentum h = I·ω. */
	inertia: mat3,
	/** Free text for people: which anatomical DOF this joint is and its sign rule. */
	description: z.string().optional()
});

export const modelSchema = z
	.object({
		name: z.string().optional(),
		bodies: z.array(bodySchema).min(1, 'a model needs at least one body')
	})
	.superRefine((model, ctx) => {
		const n = model.bodies.length;
		const childCount = new Array<number>(n).fill(0);
		const issue = (i: number, field: (string | number)[], message: string) =>
			ctx.addIssue({ code: 'custom', path: ['bodies', i, ...field], message });

		model.bodies.forEach((b, i) => {
			if (b.parent < -1 || b.parent >= i) {
				issue(i, ['parent'], `parent ${b.parent} must be −1 (the ground) or the index of an earlier body (0…${i - 1})`);
			} else if (b.parent >= 0) childCount[b.parent]++;

			const [ax, ay, az] = b.joint.axis;
			if (Math.hypot(ax, ay, az) < 1e-12) issue(i, ['joint', 'axis'], 'must not be the zero vector');

			const I = b.inertia;
			const scale = Math.max(1e-300, ...I.flat().map(Math.abs));
			const tol = 1e-9 * scale;
			const asym = Math.max(Math.abs(I[0][1] - I[1][0]), Math.abs(I[0][2] - I[2][0]), Math.abs(I[1][2] - I[2][1]));
			if (asym > tol) {
				issue(i, ['inertia'], `must be symmetric (largest difference between I[r][c] and I[c][r] is ${asym.toPrecision(3)} kg·m²)`);
			} else {
				const [l1, l2, l3] = symmetricEigenvalues(I);
				if (l1 < -tol) {
					issue(i, ['inertia'], `must be positive semi-definite (smallest principal moment ${l1.toPrecision(4)} kg·m²)`);
				} else if (l3 > l1 + l2 + tol) {
					issue(
						i,
						['inertia'],
						`principal moments ${l1.toPrecision(4)}, ${l2.toPrecision(4)}, ${l3.toPrecision(4)} kg·m² break the triangle inequality (the largest must not exceed the sum of the other two)`
					);
				}
			}
		});

		// A body with no mass anywhere below it gives the mass matrix a zero row: M would be singular.
		const subtreeMass = model.bodies.map((b) => Math.max(0, b.mass));
		for (let i = n - 1; i >= 0; i--) {
			const p = model.bodies[i].parent;
			if (p >= 0 && p < i) subtreeMass[p] += subtreeMass[i];
		}
		model.bodies.forEach((b, i) => {
			if (subtreeMass[i] > 0) return;
			issue(
				i,
				['mass'],
				childCount[i] === 0
					? 'is 0 on a leaf body: a massless body with nothing attached makes the mass matrix singular'
					: 'is 0 here and on every body attached below: the mass matrix would be singular'
			);
		});
	});

export type BodyInput = z.infer<typeof bodySchema>;
export type ModelInput = z.infer<typeof modelSchema>;

/** Eigenvalues of a symmetric 3×3 matrix in ascending order (closed-form trigonometric solution). */
export function symmetricEigenvalues(A: Mat3): Vec3 {
	const p1 = A[0][1] ** 2 + A[0][2] ** 2 + A[1][2] ** 2;
	const q = (A[0][0] + A[1][1] + A[2][2]) / 3;
	if (p1 === 0) {
		const d = [A[0][0], A[1][1], A[2][2]].sort((a, b) => a - b);
		return [d[0], d[1], d[2]];
	}
	const p2 = (A[0][0] - q) ** 2 + (A[1][1] - q) ** 2 + (A[2][2] - q) ** 2 + 2 * p1;
	const p = Math.sqrt(p2 / 6);
	const B = A.map((row, r) => row.map((v, c) => (v - (r === c ? q : 0)) / p));
	const detB =
		B[0][0] * (B[1][1] * B[2][2] - B[1][2] * B[2][1]) -
		B[0][1] * (B[1][0] * B[2][2] - B[1][2] * B[2][0]) +
		B[0][2] * (B[1][0] * B[2][1] - B[1][1] * B[2][0]);
	const r = Math.min(1, Math.max(-1, detB / 2));
	const phi = Math.acos(r) / 3;
	const e1 = q + 2 * p * Math.cos(phi);
	const e3 = q + 2 * p * Math.cos(phi + (2 * Math.PI) / 3);
	const e2 = 3 * q - e1 - e3;
	return [e3, e2, e1];
}

export class ModelError extends Error {
	constructor(public readonly problems: string[]) {
		super(`Invalid model:\n  ${problems.join('\n  ')}`);
		this.name = 'ModelError';
	}
}

/** Validates model JSON and returns the list of problems, each naming the body and the field. */
export function modelProblems(input: unknown): string[] {
	const r = modelSchema.safeParse(input);
	if (r.success) return [];
	const bodies = (input as { bodies?: { name?: unknown }[] } | null)?.bodies;
	return r.error.issues.map((iss) => {
		const [head, idx, ...rest] = iss.path;
		if (head === 'bodies' && typeof idx === 'number') {
			const name = bodies?.[idx]?.name;
			const label = typeof name === 'string' && name ? `body ${idx} "${name}"` : `body ${idx}`;
			return `${label}: ${rest.length ? rest.join('.') : 'body'}: ${iss.message}`;
		}
		return `${iss.path.length ? iss.path.join('.') : 'model'}: ${iss.message}`;
	});
}

/**
 * The engine's working form of a model: flat typed arrays indexed by body, axes normalised.
 * Body i's joint is DOF i, so q, q̇, q̈ and Q have one entry per body.
 */
export interface Model {
	readonly name: string;
	readonly n: number;
	readonly names: readonly string[];
	readonly parent: Int32Array;
	/** 0 revolute, 1 prismatic. */
	readonly kind: Uint8Array;
	readonly axis: Float64Array;
	readonly anchor: Float64Array;
	/** Fixed rotation R0 (row-major, body → parent); identity where none was given. */
	readonly rot0: Float64Array;
	readonly hasRot0: Uint8Array;
	readonly mass: Float64Array;
	readonly com: Float64Array;
	/** Inertia about the COM, body frame, row-major 3×3. */
	readonly inertia: Float64Array;
	/** 1, 2, 3 when the joint axis is exactly ±X, ±Y, ±Z of the body frame (cheaper rotations); 0 otherwise. */
	readonly axisCode: Uint8Array;
	/** +1 or −1: the direction of a coded axis (a rotation by q about −e is one by −q about e). */
	readonly axisSign: Float64Array;
	/** axisCode for revolute joints without a fixed rotation (they take the plane-rotation fast path), else 0. */
	readonly planar: Uint8Array;
	/** 1 when the joint point coincides with the parent's origin (anchor = 0), as in multi-DOF joint chains. */
	readonly anchorZero: Uint8Array;
	/** The validated input, kept for display and export. */
	readonly source: ModelInput;
}

export const REVOLUTE = 0;
export const PRISMATIC = 1;

/** Validates and compiles a model; throws ModelError listing every problem. */
export function compileModel(input: unknown): Model {
	const problems = modelProblems(input);
	if (problems.length) throw new ModelError(problems);
	const m = modelSchema.parse(input);
	const n = m.bodies.length;
	const out = {
		name: m.name ?? 'model',
		n,
		names: m.bodies.map((b) => b.name),
		parent: new Int32Array(n),
		kind: new Uint8Array(n),
		axis: new Float64Array(3 * n),
		anchor: new Float64Array(3 * n),
		rot0: new Float64Array(9 * n),
		hasRot0: new Uint8Array(n),
		mass: new Float64Array(n),
		com: new Float64Array(3 * n),
		inertia: new Float64Array(9 * n),
		axisCode: new Uint8Array(n),
		axisSign: new Float64Array(n),
		anchorZero: new Uint8Array(n),
		planar: new Uint8Array(n),
		source: m
	};
	m.bodies.forEach((b, i) => {
		out.parent[i] = b.parent;
		out.kind[i] = b.joint.type === 'revolute' ? REVOLUTE : PRISMATIC;
		const len = Math.hypot(...b.joint.axis);
		for (let k = 0; k < 3; k++) {
			out.axis[3 * i + k] = b.joint.axis[k] / len;
			out.anchor[3 * i + k] = b.anchor[k];
			out.com[3 * i + k] = b.com[k];
		}
		const R = b.rotation ?? [
			[1, 0, 0],
			[0, 1, 0],
			[0, 0, 1]
		];
		const identity = R.every((row, r) => row.every((v, c) => v === (r === c ? 1 : 0)));
		out.hasRot0[i] = identity ? 0 : 1;
		for (let r = 0; r < 3; r++)
			for (let c = 0; c < 3; c++) {
				out.rot0[9 * i + 3 * r + c] = R[r][c];
				// Symmetrise exactly: the schema allowed rounding-level asymmetry.
				out.inertia[9 * i + 3 * r + c] = 0.5 * (b.inertia[r][c] + b.inertia[c][r]);
			}
		out.mass[i] = b.mass;
		const [x, y, z] = [0, 1, 2].map((k) => out.axis[3 * i + k]);
		out.axisCode[i] =
			y === 0 && z === 0 && Math.abs(x) === 1
				? 1
				: x === 0 && z === 0 && Math.abs(y) === 1
					? 2
					: x === 0 && y === 0 && Math.abs(z) === 1
						? 3
						: 0;
		out.axisSign[i] = out.axisCode[i] ? x + y + z : 1;
		out.anchorZero[i] = b.anchor.every((v) => v === 0) ? 1 : 0;
		out.planar[i] = out.kind[i] === REVOLUTE && !out.hasRot0[i] ? out.axisCode[i] : 0;
	});
	return out;
}

/** Standard gravity (9.80665 m/s², the CGPM 1901 conventional value) along −Y, ISB's superior axis. */
export const STANDARD_GRAVITY: Vec3 = [0, -9.80665, 0];
