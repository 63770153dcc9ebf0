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

/**
 * out = A·v for the 3×3 A whose entry (r, c) is M[mo + r·rs + c·cs], v and out read and written with strides vs and os:
 * M itself with (rs, cs) = (3, 1), Mᵀ with (1, 3), and a column of a matrix with stride 3.
 */
function mulStrided(M: F, mo: number, rs: number, cs: number, v: F, vo: number, vs: number, out: F, oo: number, os: number): void {
	const x = v[vo],
		y = v[vo + vs],
		z = v[vo + 2 * vs];
	const m1 = mo + rs,
		m2 = mo + 2 * rs;
	out[oo] = M[mo] * x + M[mo + cs] * y + M[mo + 2 * cs] * z;
	out[oo + os] = M[m1] * x + M[m1 + cs] * y + M[m1 + 2 * cs] * z;
	out[oo + 2 * os] = M[m2] * x + M[m2 + cs] * y + M[m2 + 2 * cs] * z;
}

/** out = M·v */
export function mul3(M: F, mo: number, v: F, vo: number, out: F, oo: number): void {
	mulStrided(M, mo, 3, 1, v, vo, 1, out, oo, 1);
}

/** out = Mᵀ·v */
export function mulT3(M: F, mo: number, v: F, vo: number, out: F, oo: number): void {
	mulStrided(M, mo, 1, 3, v, vo, 1, out, oo, 1);
}

/** out = A·B (3×3), a column at a time; `out` may be B but not A. */
export function matMul3(A: F, ao: number, B: F, bo: number, out: F, oo: number): void {
	for (let c = 0; c < 3; c++) mulStrided(A, ao, 3, 1, B, bo + c, 3, out, oo + c, 3);
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
 * acceleration a while the body turns at ω with angular acceleration α (a, α, ω at offset `o` of their arrays); the last
 * term as (ω·r) ω − (ω·ω) r. `out` must not be one of the inputs.
 */
export function pointAcceleration(a: F, al: F, w: F, o: number, r: F, ro: number, out: F, oo: number): void {
	const wr = dot3(w, o, r, ro),
		ww = dot3(w, o, w, o);
	for (let k = 0; k < 3; k++) out[oo + k] = a[o + k] + wr * w[o + k] - ww * r[ro + k];
	addCross3(1, al, o, r, ro, out, oo);
}
