// Force plates as lab equipment: the zod schema that validates one (with messages that name the field and the
// tolerance), and its geometry: centre, surface normal, measuring origin, outline, "is this point over the plate?".
//
// Pure TypeScript, no I/O. Axes, sign rules and tolerances are written up in docs/processing.md ("Force plates").
import { z } from 'zod';
import type { Mat3, Vec3 } from '../../dynamics/model';

export type { Mat3, Vec3 };

/** What a plate outputs besides its three forces: centre of pressure and free moment, or three moments about its measuring origin. */
export const PLATE_OUTPUTS = ['forces-cop', 'forces-moments'] as const;
export type PlateOutput = (typeof PLATE_OUTPUTS)[number];

/**
 * A force plate in the lab (lab axes: X anterior, Y up, Z right; metres).
 *
 * - `corners`: the four corners of the top surface in lab axes, in order going round the plate.
 * - `axes`: R_plate→lab, row-major: `axes[i][k]` is the lab component i of plate axis k, so column k is plate axis k
 *   in lab axes. The plate's **z axis (column 3) is the surface normal pointing INTO the plate** — down, for a plate
 *   set in the floor — so a person standing on it loads it with a positive Fz. x and y lie in the surface.
 * - `originDepthM`: the measuring origin lies this far below the centre of the top surface, along the z axis:
 *   origin = centre + originDepthM · z. In plate axes the top surface is the plane z = −originDepthM.
 * - `output`: `forces-moments` (Fx Fy Fz, Mx My Mz about the measuring origin) or `forces-cop` (Fx Fy Fz, the CoP
 *   and the free moment about the z axis).
 */
export interface ForcePlate {
	name: string;
	corners: [Vec3, Vec3, Vec3, Vec3];
	axes: Mat3;
	originDepthM: number;
	output: PlateOutput;
}

/** A plate's name is the column prefix of its channels in a recording (`plate1.force.x (N)`). */
export const PLATE_NAME_PATTERN = /^[a-z][a-z0-9_-]{0,31}$/i;
/** Opposite sides may differ in length by this much (m), and the corners may lie this far off one plane. */
export const PLATE_LENGTH_TOLERANCE_M = 0.001;
/** Each corner's angle may differ from 90° by this much, and the z axis from the corners' normal by this much (degrees). */
export const PLATE_ANGLE_TOLERANCE_DEG = 0.5;
/** Largest |RᵀR − I| entry (and |det R − 1|) accepted for the plate's axes; they are used as entered, never corrected. */
export const PLATE_AXES_TOLERANCE = 1e-6;
/** Shortest side (m) of a plate: anything smaller is a typing error, not a plate (our choice). */
export const PLATE_MIN_SIDE_M = 0.05;
/** Deepest measuring origin accepted (m) below the top surface. */
export const PLATE_MAX_DEPTH_M = 0.2;

const finite = z.number({ error: 'must be a number' }).refine(Number.isFinite, 'must be a finite number');
const vec3 = z.tuple([finite, finite, finite], { error: 'must be three numbers [x, y, z] in metres' });
const mat3 = z.tuple([vec3, vec3, vec3], { error: 'must be a 3×3 array of numbers (rows of R_plate→lab)' });

const fmt = (x: number, digits = 3) => {
	if (x === 0) return '0';
	const a = Math.abs(x);
	return a >= 1e-3 && a < 1e5 ? String(Number(x.toPrecision(digits))) : x.toExponential(digits - 1);
};
const mm = (m: number) => `${fmt(m * 1000)} mm`;
const deg = (rad: number) => `${fmt((rad * 180) / Math.PI)}°`;

const sub = (a: Vec3, b: Vec3): Vec3 => [a[0] - b[0], a[1] - b[1], a[2] - b[2]];
const dot = (a: Vec3, b: Vec3) => a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
const cross = (a: Vec3, b: Vec3): Vec3 => [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
const norm = (a: Vec3) => Math.hypot(a[0], a[1], a[2]);
const column = (R: Mat3, k: number): Vec3 => [R[0][k], R[1][k], R[2][k]];

/**
 * Unit normal of the plane the corners span, its sign arbitrary: the cross product of the diagonals (for a skew
 * quadrilateral, the plane every corner is equally far from), else — corners out of order, diagonals parallel — of
 * the sides at corner 1; null when the corners lie on one line.
 */
function cornersNormal(c: [Vec3, Vec3, Vec3, Vec3]): Vec3 | null {
	for (const n of [cross(sub(c[2], c[0]), sub(c[3], c[1])), cross(sub(c[1], c[0]), sub(c[3], c[0]))]) {
		const l = norm(n);
		if (l > 1e-9) return [n[0] / l, n[1] / l, n[2] / l];
	}
	return null;
}

/** Every problem with the corners, as messages (empty when they form a rectangle in one plane). */
function cornerProblems(c: [Vec3, Vec3, Vec3, Vec3]): string[] {
	const problems: string[] = [];
	const sides = [0, 1, 2, 3].map((i) => sub(c[(i + 1) % 4], c[i]));
	const lengths = sides.map(norm);
	for (let i = 0; i < 4; i++) {
		if (lengths[i] < PLATE_MIN_SIDE_M) {
			problems.push(
				`corners ${i + 1} and ${((i + 1) % 4) + 1} are ${mm(lengths[i])} apart; each side of a plate must be at least ${mm(PLATE_MIN_SIDE_M)}`
			);
		}
	}
	if (problems.length) return problems;
	const n = cornersNormal(c);
	if (!n) return ['the corners do not span a surface (they lie on one line); give the four corners going round the plate'];
	const centre = plateCentreOf(c);
	const offPlane = Math.max(...c.map((p) => Math.abs(dot(sub(p, centre), n))));
	if (offPlane > PLATE_LENGTH_TOLERANCE_M) {
		problems.push(
			`the corners are not in one plane: each lies ${mm(offPlane)} off the plane through their centre (tolerance ${mm(PLATE_LENGTH_TOLERANCE_M)})`
		);
	}
	for (const [a, b] of [
		[0, 2],
		[1, 3]
	]) {
		const d = Math.abs(lengths[a] - lengths[b]);
		if (d > PLATE_LENGTH_TOLERANCE_M) {
			problems.push(
				`the corners are not a rectangle: side ${a + 1}–${a + 2} is ${mm(lengths[a])} long and the opposite side ${b + 1}–${((b + 1) % 4) + 1} ${mm(lengths[b])} (they may differ by ${mm(PLATE_LENGTH_TOLERANCE_M)})`
			);
		}
	}
	const tolerance = (PLATE_ANGLE_TOLERANCE_DEG * Math.PI) / 180;
	for (let i = 0; i < 4; i++) {
		const u = sides[(i + 3) % 4],
			v = sides[i];
		const angle = Math.acos(Math.max(-1, Math.min(1, -dot(u, v) / (lengths[(i + 3) % 4] * lengths[i]))));
		if (Math.abs(angle - Math.PI / 2) > tolerance) {
			problems.push(
				`the corners are not a rectangle: the angle at corner ${i + 1} is ${deg(angle)} (must be 90° within ${PLATE_ANGLE_TOLERANCE_DEG}°); give the corners in order going round the plate`
			);
			break;
		}
	}
	return problems;
}

/** Every problem with the axes on their own (orthonormal, right-handed), as messages. */
function axesProblems(R: Mat3): string[] {
	let worst = 0;
	for (let r = 0; r < 3; r++)
		for (let c = 0; c < 3; c++) {
			const d = R[0][r] * R[0][c] + R[1][r] * R[1][c] + R[2][r] * R[2][c] - (r === c ? 1 : 0);
			worst = Math.max(worst, Math.abs(d));
		}
	const det =
		R[0][0] * (R[1][1] * R[2][2] - R[1][2] * R[2][1]) -
		R[0][1] * (R[1][0] * R[2][2] - R[1][2] * R[2][0]) +
		R[0][2] * (R[1][0] * R[2][1] - R[1][1] * R[2][0]);
	if (worst > PLATE_AXES_TOLERANCE) {
		return [
			`the plate axes (the columns) are not orthonormal: the columns' dot products differ from the identity by up to ${fmt(worst)} (tolerance ${PLATE_AXES_TOLERANCE}); they are not corrected for you — enter unit, mutually perpendicular axes to at least 7 decimals`
		];
	}
	if (det < 0) {
		return ['the plate axes are left-handed (x × y = −z, determinant −1); plate axes must be right-handed (x × y = z): reverse one axis'];
	}
	return [];
}

/**
 * A force plate as entered by a lab admin: the name pattern, four finite corners forming a rectangle in one plane
 * (opposite sides equal within 1 mm, every corner 90° within 0.5°, off-plane within 1 mm, sides ≥ 5 cm), orthonormal
 * right-handed axes (within 1e-6, used as entered), the z axis along the corners' normal within 0.5° and pointing into
 * the plate (not up), the depth in [0, 0.2] m. Each issue's path names the field.
 */
export const forcePlateSchema = z
	.object({
		name: z
			.string({ error: 'must be text' })
			.regex(
				PLATE_NAME_PATTERN,
				'must start with a letter and hold only letters, digits, "_" or "-", at most 32 characters (it is the column prefix, e.g. "plate1")'
			),
		corners: z.tuple([vec3, vec3, vec3, vec3], { error: 'must be four corners [x, y, z] in lab axes (m), going round the plate' }),
		axes: mat3,
		originDepthM: finite.refine(
			(d) => d >= 0 && d <= PLATE_MAX_DEPTH_M,
			`must be from 0 to ${PLATE_MAX_DEPTH_M} m (the measuring origin's depth below the top surface)`
		),
		output: z.enum(PLATE_OUTPUTS, { error: 'must be "forces-cop" or "forces-moments"' })
	})
	.superRefine((p, ctx) => {
		const corners = cornerProblems(p.corners as ForcePlate['corners']);
		for (const message of corners) ctx.addIssue({ code: 'custom', path: ['corners'], message });
		const axes = axesProblems(p.axes as Mat3);
		for (const message of axes) ctx.addIssue({ code: 'custom', path: ['axes'], message });
		if (corners.length || axes.length) return;
		const n = cornersNormal(p.corners as ForcePlate['corners']) as Vec3;
		const zAxis = column(p.axes as Mat3, 2);
		const off = Math.acos(Math.min(1, Math.abs(dot(n, zAxis)) / norm(zAxis)));
		if (off > (PLATE_ANGLE_TOLERANCE_DEG * Math.PI) / 180) {
			ctx.addIssue({
				code: 'custom',
				path: ['axes'],
				message: `the plate z axis (column 3) must be the surface normal, but it is ${deg(off)} off perpendicular to the surface the corners span (tolerance ${PLATE_ANGLE_TOLERANCE_DEG}°)`
			});
		} else if (zAxis[1] > Math.sin((PLATE_ANGLE_TOLERANCE_DEG * Math.PI) / 180)) {
			ctx.addIssue({
				code: 'custom',
				path: ['axes'],
				message: `the plate z axis (column 3) points up, out of the surface (lab Y component ${fmt(zAxis[1])}); it must point into the plate (down for a plate in the floor): reverse z and one of x, y`
			});
		}
	});

function plateCentreOf(c: [Vec3, Vec3, Vec3, Vec3]): Vec3 {
	return [
		(c[0][0] + c[1][0] + c[2][0] + c[3][0]) / 4,
		(c[0][1] + c[1][1] + c[2][1] + c[3][1]) / 4,
		(c[0][2] + c[1][2] + c[2][2] + c[3][2]) / 4
	];
}

/** Centre of the top surface in lab axes (m): the mean of the four corners. */
export function plateCentre(plate: ForcePlate): Vec3 {
	return plateCentreOf(plate.corners);
}

/** The surface normal pointing into the plate (the plate z axis, axes column 3) in lab axes. */
export function plateNormal(plate: ForcePlate): Vec3 {
	return column(plate.axes, 2);
}

/** The measuring origin in lab axes (m): originDepthM below the surface centre along the plate z axis. */
export function plateOrigin(plate: ForcePlate): Vec3 {
	const c = plateCentre(plate),
		n = plateNormal(plate),
		d = plate.originDepthM;
	return [c[0] + d * n[0], c[1] + d * n[1], c[2] + d * n[2]];
}

/**
 * The plate's rectangle as numbers for per-sample tests: corner 1 (`o`), unit vectors along side 1–2 (`u`) and side
 * 1–4 (`v`), and the two side lengths. A point p lies over the plate when 0 ≤ (p − o)·u ≤ lu and 0 ≤ (p − o)·v ≤ lv.
 */
export interface PlateRect {
	o: Vec3;
	u: Vec3;
	v: Vec3;
	lu: number;
	lv: number;
}

export function plateRect(plate: ForcePlate): PlateRect {
	const [c0, c1, , c3] = plate.corners;
	const a = sub(c1, c0),
		b = sub(c3, c0);
	const lu = norm(a),
		lv = norm(b);
	return { o: c0, u: [a[0] / lu, a[1] / lu, a[2] / lu], v: [b[0] / lv, b[1] / lv, b[2] / lv], lu, lv };
}

/**
 * How far (m) the point lies outside the plate's outline, measured in the plate's surface after projecting along
 * its normal (a top view for a plate in the floor): 0 inside, the distance to the nearest edge (or corner) outside,
 * NaN for a missing point.
 * `x`, `y`, `z` are the point's lab coordinates (scalars, so a per-sample loop allocates nothing).
 */
export function outsideDistance(rect: PlateRect, x: number, y: number, z: number): number {
	const px = x - rect.o[0],
		py = y - rect.o[1],
		pz = z - rect.o[2];
	const s = px * rect.u[0] + py * rect.u[1] + pz * rect.u[2];
	const t = px * rect.v[0] + py * rect.v[1] + pz * rect.v[2];
	if (Number.isNaN(s) || Number.isNaN(t)) return NaN;
	const ds = s < 0 ? -s : s > rect.lu ? s - rect.lu : 0;
	const dt = t < 0 ? -t : t > rect.lv ? t - rect.lv : 0;
	return ds === 0 ? dt : dt === 0 ? ds : Math.hypot(ds, dt);
}

/**
 * Whether a lab point lies over the plate (projected along the plate's normal onto its surface: a top view for a
 * plate in the floor), the outline grown by marginM on every side (a negative margin shrinks it).
 */
export function plateContains(plate: ForcePlate, pointLab: ArrayLike<number>, marginM = 0): boolean {
	const rect = plateRect(plate);
	if (marginM >= 0) return outsideDistance(rect, pointLab[0], pointLab[1], pointLab[2]) <= marginM;
	const px = pointLab[0] - rect.o[0],
		py = pointLab[1] - rect.o[1],
		pz = pointLab[2] - rect.o[2];
	const s = px * rect.u[0] + py * rect.u[1] + pz * rect.u[2];
	const t = px * rect.v[0] + py * rect.v[1] + pz * rect.v[2];
	return s >= -marginM && s <= rect.lu + marginM && t >= -marginM && t <= rect.lv + marginM;
}

/** The plate's outline for a top-view drawing of the lab floor: lab X (anterior) and Z (right) of the four corners, in order. */
export function plateOutline(plate: ForcePlate): { x: number; z: number }[] {
	return plate.corners.map((c) => ({ x: c[0], z: c[2] }));
}
