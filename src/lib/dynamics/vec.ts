// 3-vector and 3×3 helpers over (array, offset): small enough for the JIT to inline, so the engine's loops read as algebra.
// Matrices are row-major. Every helper reads its inputs before it writes, so `out` may be one of them unless said otherwise.

type F = Float64Array;

/** out += s·v */
export function addScaled3(s: number, v: F, vo: number, out: F, oo: number): void {
	out[oo] += s * v[vo];
	out[oo + 1] += s * v[vo + 1];
	out[oo + 2] += s * v[vo + 2];
}

export function dot3(a: F, ao: number, b: F, bo: number): number {
	return a[ao] * b[bo] + a[ao + 1] * b[bo + 1] + a[ao + 2] * b[bo + 2];
}

/** out += s·(a × b) */
export function addCross3(s: number, a: F, ao: number, b: F, bo: number, out: F, oo: number): void {
	const ax = a[ao],
		ay = a[ao + 1],
		az = a[ao + 2],
		bx = b[bo],
		by = b[bo + 1],
		bz = b[bo + 2];
	out[oo] += s * (ay * bz - az * by);
	out[oo + 1] += s * (az * bx - ax * bz);
	out[oo + 2] += s * (ax * by - ay * bx);
}

/** out = M·v */
export function mul3(M: F, mo: number, v: F, vo: number, out: F, oo: number): void {
	const x = v[vo],
		y = v[vo + 1],
		z = v[vo + 2];
	out[oo] = M[mo] * x + M[mo + 1] * y + M[mo + 2] * z;
	out[oo + 1] = M[mo + 3] * x + M[mo + 4] * y + M[mo + 5] * z;
	out[oo + 2] = M[mo + 6] * x + M[mo + 7] * y + M[mo + 8] * z;
}

/** out = Mᵀ·v */
export function mulT3(M: F, mo: number, v: F, vo: number, out: F, oo: number): void {
	const x = v[vo],
		y = v[vo + 1],
		z = v[vo + 2];
	out[oo] = M[mo] * x + M[mo + 3] * y + M[mo + 6] * z;
	out[oo + 1] = M[mo + 1] * x + M[mo + 4] * y + M[mo + 7] * z;
	out[oo + 2] = M[mo + 2] * x + M[mo + 5] * y + M[mo + 8] * z;
}

/** out = A·B (3×3), a column at a time; `out` may be B but not A. */
export function matMul3(A: F, ao: number, B: F, bo: number, out: F, oo: number): void {
	for (let c = 0; c < 3; c++) {
		const x = B[bo + c],
			y = B[bo + 3 + c],
			z = B[bo + 6 + c];
		out[oo + c] = A[ao] * x + A[ao + 1] * y + A[ao + 2] * z;
		out[oo + 3 + c] = A[ao + 3] * x + A[ao + 4] * y + A[ao + 5] * z;
		out[oo + 6 + c] = A[ao + 6] * x + A[ao + 7] * y + A[ao + 8] * z;
	}
}

/**
 * out = Rot(u, θ) from c = cos θ, s = sin θ: the right-handed rotation about the unit axis u, by Rodrigues' formula
 * R = c·1 + s·[u]× + (1 − c)·u uᵀ.
 */
export function axisRotation(u: F, uo: number, c: number, s: number, out: F, oo: number): void {
	const x = u[uo],
		y = u[uo + 1],
		z = u[uo + 2],
		v = 1 - c;
	out[oo] = c + x * x * v;
	out[oo + 1] = x * y * v - z * s;
	out[oo + 2] = x * z * v + y * s;
	out[oo + 3] = y * x * v + z * s;
	out[oo + 4] = c + y * y * v;
	out[oo + 5] = y * z * v - x * s;
	out[oo + 6] = z * x * v - y * s;
	out[oo + 7] = z * y * v + x * s;
	out[oo + 8] = c + z * z * v;
}

/**
 * out = a + α × r + ω × (ω × r): the acceleration of the point r of a rigid body whose reference point moves with
 * acceleration a while the body turns at ω with angular acceleration α (a, α, ω at offset `o` of their arrays).
 */
export function pointAcceleration(a: F, al: F, w: F, o: number, r: F, ro: number, out: F, oo: number): void {
	const wx = w[o],
		wy = w[o + 1],
		wz = w[o + 2],
		rx = r[ro],
		ry = r[ro + 1],
		rz = r[ro + 2];
	const ux = wy * rz - wz * ry,
		uy = wz * rx - wx * rz,
		uz = wx * ry - wy * rx;
	out[oo] = a[o] + (al[o + 1] * rz - al[o + 2] * ry) + (wy * uz - wz * uy);
	out[oo + 1] = a[o + 1] + (al[o + 2] * rx - al[o] * rz) + (wz * ux - wx * uz);
	out[oo + 2] = a[o + 2] + (al[o] * ry - al[o + 1] * rx) + (wx * uy - wy * ux);
}
