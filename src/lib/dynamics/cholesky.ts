// Cholesky factorisation M = L Lᵀ of a symmetric positive-definite matrix, in place, and the matching solve.

export class NotPositiveDefiniteError extends Error {
	constructor(
		public readonly row: number,
		public readonly pivot: number
	) {
		super(`mass matrix is not positive definite (pivot ${row} is ${pivot.toPrecision(3)}): check masses and joint axes`);
		this.name = 'NotPositiveDefiniteError';
	}
}

/** Overwrites the lower triangle of the n × n row-major matrix A with L (A = L Lᵀ); the upper triangle is left alone. */
export function choleskyInPlace(A: Float64Array, n: number): void {
	for (let j = 0; j < n; j++) {
		let d = A[j * n + j];
		for (let k = 0; k < j; k++) d -= A[j * n + k] * A[j * n + k];
		if (!(d > 0)) throw new NotPositiveDefiniteError(j, d);
		const ljj = Math.sqrt(d);
		A[j * n + j] = ljj;
		for (let i = j + 1; i < n; i++) {
			let s = A[i * n + j];
			for (let k = 0; k < j; k++) s -= A[i * n + k] * A[j * n + k];
			A[i * n + j] = s / ljj;
		}
	}
}

/** Solves L Lᵀ x = b with L from choleskyInPlace; b is overwritten with x. */
export function choleskySolveInPlace(L: Float64Array, n: number, b: Float64Array): void {
	for (let i = 0; i < n; i++) {
		let s = b[i];
		for (let k = 0; k < i; k++) s -= L[i * n + k] * b[k];
		b[i] = s / L[i * n + i];
	}
	for (let i = n - 1; i >= 0; i--) {
		let s = b[i];
		for (let k = i + 1; k < n; k++) s -= L[k * n + i] * b[k];
		b[i] = s / L[i * n + i];
	}
}
