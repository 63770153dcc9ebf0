// Typed rotation matrices: 6-decimal entries accepted and made orthonormal (the nearest rotation, checked against
// scipy.linalg.polar and numpy's SVD), larger errors and reflections refused with the numbers in the message.
import fs from 'node:fs';
import { describe, expect, it } from 'vitest';
import { checkRotation, det3, nearestRotation, orthonormalityError, ROTATION_TOLERANCE } from '../../../src/lib/dynamics/rotation';
import { compileModel, modelProblems, type Mat3, type ModelInput } from '../../../src/lib/dynamics/model';
import { loadReference } from '../../reference/fixture';

interface Case {
	m: Mat3;
	polar: Mat3;
	svd: Mat3;
	error: number;
	det: number;
	why?: string;
}
const committed = 'tests/fixtures/dynamics/scipy-polar.json';
const { fixture, regenerated } = loadReference<{ source: string; accepted: Case[]; refused: Case[] }>(
	'tests/reference/scipy_polar.py',
	committed
);
const maxDiff = (A: Mat3, B: Mat3) => Math.max(...A.flatMap((row, r) => row.map((v, c) => Math.abs(v - B[r][c]))));

/** Rx(a)·Ry(b)·Rz(c), written out (a closed form independent of the code under test). */
function cardan(a: number, b: number, c: number): Mat3 {
	const [ca, sa, cb, sb, cc, sc] = [Math.cos(a), Math.sin(a), Math.cos(b), Math.sin(b), Math.cos(c), Math.sin(c)];
	return [
		[cb * cc, -cb * sc, sb],
		[ca * sc + sa * sb * cc, ca * cc - sa * sb * sc, -sa * cb],
		[sa * sc - ca * sb * cc, sa * cc + ca * sb * sc, ca * cb]
	];
}
const round6 = (R: Mat3) => R.map((row) => row.map((v) => Number(v.toFixed(6)))) as Mat3;

describe(`nearestRotation against scipy.linalg.polar and numpy.linalg.svd (${regenerated ? 'regenerated now' : 'committed fixture'}: ${fixture.source})`, () => {
	it.runIf(regenerated)(
		`the committed fixture is what the script writes now (else: rerun tests/reference/scipy_polar.py --out ${committed})`,
		() => {
			const old = JSON.parse(fs.readFileSync(committed, 'utf8')) as typeof fixture;
			expect(old.accepted.map((c) => c.m)).toEqual(fixture.accepted.map((c) => c.m));
			for (let i = 0; i < old.accepted.length; i++) expect(maxDiff(old.accepted[i].polar, fixture.accepted[i].polar)).toBeLessThan(1e-14);
		}
	);

	it.each(fixture.accepted.map((c, i) => [i, c] as const))(
		'random rotation %i rounded to 6 decimals: accepted, corrected to scipy’s polar factor within 1e-12',
		(_, c) => {
			expect(orthonormalityError(c.m)).toBeCloseTo(c.error, 12);
			expect(det3(c.m)).toBeCloseTo(c.det, 12);
			const r = checkRotation(c.m);
			expect(r.ok).toBe(true);
			if (!r.ok) return;
			expect(r.corrected).toBe(true);
			expect(orthonormalityError(r.rotation)).toBeLessThan(1e-12);
			expect(det3(r.rotation)).toBeCloseTo(1, 12);
			expect(maxDiff(r.rotation, c.polar)).toBeLessThan(1e-12);
			expect(maxDiff(r.rotation, c.svd)).toBeLessThan(1e-12);
			// the correction stays within the rounding: no entry moves by more than a few units of the 6th decimal
			expect(maxDiff(r.rotation, c.m)).toBeLessThan(2e-6);
		}
	);

	it.each(fixture.refused.map((c) => [c.why!, c] as const))(
		'%s: refused, the message giving the norm, the tolerance and the sign of the determinant',
		(why, c) => {
			const r = checkRotation(c.m);
			expect(r.ok).toBe(false);
			if (r.ok) return;
			expect(r.error).toBeCloseTo(c.error, 12);
			expect(r.det).toBeCloseTo(c.det, 12);
			if (why.includes('1e-3')) {
				expect(r.message).toContain(`‖RᵀR − I‖ (Frobenius norm) is ${Number(c.error.toPrecision(3))}, more than the tolerance 1.00e-5`);
				expect(r.message).not.toMatch(/its determinant/);
			} else {
				expect(r.message).toMatch(/its determinant is -1, negative: an improper rotation \(a reflection/);
				expect(r.message).not.toMatch(/Frobenius/);
			}
		}
	);
});

describe('checkRotation', () => {
	it('the stated bound: 6-decimal rounding stays within 3e-6 < tolerance, over many Cardan angles (closed form)', () => {
		let worst = 0;
		for (let i = 0; i < 500; i++) {
			const R = round6(cardan(0.37 * i, 1.1 * i + 0.2, -0.73 * i));
			worst = Math.max(worst, orthonormalityError(R));
			const r = checkRotation(R);
			expect(r.ok).toBe(true);
			if (r.ok) expect(orthonormalityError(r.rotation)).toBeLessThan(1e-12);
		}
		expect(worst).toBeLessThan(3e-6);
		expect(ROTATION_TOLERANCE).toBe(1e-5);
	});

	it('leaves an orthonormal matrix exactly as it is (exact 0 and ±1 entries keep the engine’s fast paths)', () => {
		const Rz90: Mat3 = [
			[0, -1, 0],
			[1, 0, 0],
			[0, 0, 1]
		];
		const r = checkRotation(Rz90);
		expect(r).toEqual({ ok: true, rotation: Rz90, error: 0, corrected: false });
		const c = cardan(0.3, -0.2, 1.4);
		expect(checkRotation(c)).toMatchObject({ ok: true, rotation: c, corrected: false });
	});

	it('refuses an entry off by 1e-3, with the norm in the message equal to its closed form', () => {
		const R = round6(cardan(0.4, 0.5, 0.6));
		const u = R[0][1];
		const d = 1e-3;
		R[0][1] += d;
		// M = R + d e_i e_jᵀ: MᵀM − I = d (u e_jᵀ + e_j uᵀ) + d² e_j e_jᵀ with u = Rᵀe_i (a unit vector), so
		// ‖MᵀM − I‖²_F = 2 d² (1 − u_j²) + (2 d u_j + d²)² (up to the 6-decimal rounding of R, ≤ 3e-6)
		const closed = Math.sqrt(2 * d * d * (1 - u * u) + (2 * d * u + d * d) ** 2);
		const r = checkRotation(R);
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(Math.abs(r.error - closed)).toBeLessThan(3e-6);
		expect(r.message).toContain(`is ${Number(r.error.toPrecision(3))}, more than the tolerance 1.00e-5`);
		expect(checkRotation(R.map((row) => row.map((v) => v * 1.001)) as Mat3).ok).toBe(false);
		expect(
			(
				checkRotation([
					[0, 0, 0],
					[0, 1, 0],
					[0, 0, 1]
				]) as { message: string }
			).message
		).toMatch(/determinant is 0: it is singular/);
	});

	it('nearestRotation of a rotation times a symmetric positive definite matrix gives the rotation back (polar decomposition, closed form)', () => {
		const U = cardan(0.9, -0.4, 2.2);
		const P: Mat3 = [
			[1.002, 0.001, -0.0005],
			[0.001, 0.999, 0.0003],
			[-0.0005, 0.0003, 1.001]
		];
		const M = U.map((row) => [0, 1, 2].map((c) => row[0] * P[0][c] + row[1] * P[1][c] + row[2] * P[2][c])) as Mat3;
		expect(maxDiff(nearestRotation(M), U)).toBeLessThan(1e-14);
	});
});

describe('the model schema takes typed rotations', () => {
	const model = (rotation: Mat3): ModelInput => ({
		bodies: [
			{
				name: 'upper',
				parent: -1,
				joint: { type: 'revolute', axis: [0, 0, 1] },
				anchor: [0, 0, 0],
				rotation,
				mass: 2,
				com: [0, -0.2, 0],
				inertia: [
					[0.02, 0, 0],
					[0, 0.002, 0],
					[0, 0, 0.02]
				]
			}
		]
	});

	it('a 6-decimal rotation compiles, with its rotation corrected to orthonormal within 1e-12', () => {
		const typed = fixture.accepted[3].m;
		expect(modelProblems(model(typed))).toEqual([]);
		const m = compileModel(model(typed));
		const R = [0, 1, 2].map((r) => [0, 1, 2].map((c) => m.rot0[3 * r + c])) as Mat3;
		expect(orthonormalityError(R)).toBeLessThan(1e-12);
		expect(maxDiff(R, fixture.accepted[3].polar)).toBeLessThan(1e-12);
	});

	it('a rotation off by 1e-3 and a reflection are refused, naming the body and the numbers', () => {
		const [off, reflection] = fixture.refused;
		expect(modelProblems(model(off.m))[0]).toMatch(
			/^body 0 "upper": rotation: must be a proper rotation matrix \(orthonormal, determinant \+1\): it is not orthonormal: ‖RᵀR − I‖ \(Frobenius norm\) is 0\.00145, more than the tolerance 1\.00e-5/
		);
		expect(modelProblems(model(reflection.m))[0]).toMatch(/rotation: .*its determinant is -1, negative/);
	});
});
