// Rotation matrices as people type them: how far from orthonormal, the nearest proper rotation, or a refusal that says why.
import type { Mat3 } from './model';

/**
 * Largest accepted ‖RᵀR − I‖_F (Frobenius norm) for a typed rotation matrix, which is then replaced by the nearest
 * rotation. Why 1e-5: a rotation whose nine entries are rounded to 6 decimals has an error E with |e_ij| ≤ 5e-7, so
 * ‖E‖_F ≤ 3 · 5e-7 = 1.5e-6; with M = R + E, MᵀM − I = RᵀE + EᵀR + EᵀE and ‖RᵀE‖_F = ‖E‖_F (R orthogonal), hence
 * ‖MᵀM − I‖_F ≤ 2‖E‖_F + ‖E‖_F² ≤ 3.0e-6 < 1e-5. Rounding to 5 decimals (≤ 3.0e-5) is beyond it, as is any
 * matrix with an entry wrong in the 3rd or 4th decimal.
 */
export const ROTATION_TOLERANCE = 1e-5;

/** ‖RᵀR − I‖_F: 0 for an orthonormal matrix. */
export function orthonormalityError(R: Mat3): number {
	let sum = 0;
	for (let r = 0; r < 3; r++)
		for (let c = 0; c < 3; c++) {
			const d = R[0][r] * R[0][c] + R[1][r] * R[1][c] + R[2][r] * R[2][c] - (r === c ? 1 : 0);
			sum += d * d;
		}
	return Math.sqrt(sum);
}

export function det3(R: Mat3): number {
	return (
		R[0][0] * (R[1][1] * R[2][2] - R[1][2] * R[2][1]) -
		R[0][1] * (R[1][0] * R[2][2] - R[1][2] * R[2][0]) +
		R[0][2] * (R[1][0] * R[2][1] - R[1][1] * R[2][0])
	);
}

/** X^{-T} = cof(X) / det(X), the cofactor matrix over the determinant (Cramer's rule). */
function inverseTranspose(X: Mat3): Mat3 {
	const d = det3(X);
	const cof = (r: number, c: number) => {
		const r1 = (r + 1) % 3,
			r2 = (r + 2) % 3,
			c1 = (c + 1) % 3,
			c2 = (c + 2) % 3;
		return (X[r1][c1] * X[r2][c2] - X[r1][c2] * X[r2][c1]) / d;
	};
	return [0, 1, 2].map((r) => [0, 1, 2].map((c) => cof(r, c))) as Mat3;
}

/**
 * The orthogonal factor U of the polar decomposition M = U H (H symmetric positive definite): the orthogonal matrix
 * nearest to M in the Frobenius norm (Fan & Hoffman 1955), equal to V Wᵀ from the SVD M = V Σ Wᵀ, and a proper
 * rotation when det M > 0. Computed by Newton's iteration X ← (X + X^{-T}) / 2, which converges quadratically to U
 * for any non-singular M (Higham 1986, "Computing the polar decomposition — with applications", SIAM J. Sci. Stat.
 * Comput. 7(4); Higham 2008, Functions of Matrices, §8.3); from a matrix within ROTATION_TOLERANCE, two or three
 * steps reach rounding level. Checked against scipy.linalg.polar (tests/reference/scipy_polar.py).
 */
export function nearestRotation(M: Mat3): Mat3 {
	let X = M.map((row) => [...row]) as Mat3;
	for (let k = 0; k < 50; k++) {
		const Y = inverseTranspose(X);
		let change = 0;
		const next = X.map((row, r) =>
			row.map((v, c) => {
				const w = 0.5 * (v + Y[r][c]);
				change = Math.max(change, Math.abs(w - v));
				return w;
			})
		) as Mat3;
		X = next;
		if (change <= 1e-16) break;
	}
	return X;
}

export type RotationCheck =
	{ ok: true; rotation: Mat3; error: number; corrected: boolean } | { ok: false; error: number; det: number; message: string };

const show = (x: number) =>
	x === 0 ? '0' : Math.abs(x) >= 1e-3 && Math.abs(x) < 1e4 ? String(Number(x.toPrecision(3))) : x.toExponential(2);

/**
 * Accepts a typed rotation matrix within `tolerance` of orthonormal with a positive determinant, replaced by the
 * nearest proper rotation (unchanged when it is orthonormal to rounding level, so exact matrices stay exact);
 * otherwise says how far off it is, the tolerance, and whether its determinant is negative (improper: a reflection).
 */
export function checkRotation(R: Mat3, tolerance = ROTATION_TOLERANCE): RotationCheck {
	const error = orthonormalityError(R);
	const det = det3(R);
	if (!(error <= tolerance) || !(det > 0)) {
		const why: string[] = [];
		if (!(error <= tolerance))
			why.push(
				`it is not orthonormal: ‖RᵀR − I‖ (Frobenius norm) is ${show(error)}, more than the tolerance ${show(tolerance)} (entries rounded to 6 decimals stay within 3e-6; check the entries for a typing error)`
			);
		if (!(det > 0))
			why.push(
				det < 0
					? `its determinant is ${show(det)}, negative: an improper rotation (a reflection; one axis has the wrong sign, e.g. a left-handed frame)`
					: `its determinant is ${show(det)}: it is singular, not a rotation`
			);
		return { ok: false, error, det, message: `must be a proper rotation matrix (orthonormal, determinant +1): ${why.join('; and ')}` };
	}
	if (error <= 4 * Number.EPSILON) return { ok: true, rotation: R, error, corrected: false };
	return { ok: true, rotation: nearestRotation(R), error, corrected: true };
}
