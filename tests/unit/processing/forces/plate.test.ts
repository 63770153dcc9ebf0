// The force plate schema's messages and the plate's geometry. Geometry checked in closed form (rectangle side lengths,
// the angle between two vectors from their dot product, distances to a rectangle's edges — plane geometry).
import { describe, expect, it } from 'vitest';
import {
	forcePlateSchema,
	plateCentre,
	plateContains,
	plateNormal,
	plateOrigin,
	plateOutline,
	type Vec3
} from '../../../../src/lib/processing/forces';
import { plate1 as good, plate2 } from './plates';

/** The schema's issues as "path: message". */
function issues(input: unknown): string[] {
	const r = forcePlateSchema.safeParse(input);
	return r.success ? [] : r.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`);
}

const withCorners = (corners: Vec3[]) => ({ ...good, corners });

describe('forcePlateSchema', () => {
	it('accepts a plate in the floor, and the rotated one (plate z down)', () => {
		expect(issues(good)).toEqual([]);
		expect(issues({ ...plate2, name: 'Plate_2-b', originDepthM: good.originDepthM })).toEqual([]);
	});

	it('names: the column prefix pattern', () => {
		for (const name of ['1plate', 'plate 1', 'plate.1', '', 'p'.repeat(33)]) {
			expect(issues({ ...good, name })).toEqual([expect.stringMatching(/^name: must start with a letter .* at most 32 characters/)]);
		}
		expect(issues({ ...good, name: 'p'.repeat(32) })).toEqual([]);
	});

	it('corners not a rectangle: opposite sides differ by more than 1 mm (a 0.6 × 0.4 m plate with one side 2 mm longer)', () => {
		// moving corner 3 by 2 mm along X makes side 2–3 √(0.4² + 0.002²) = 400.005 mm (within 1 mm of side 4–1) and side 3–4 602 mm
		const msgs = issues(
			withCorners([
				[0.7, 0, 0.3],
				[1.3, 0, 0.3],
				[1.302, 0, 0.7],
				[0.7, 0, 0.7]
			])
		);
		expect(msgs).toContain(
			'corners: the corners are not a rectangle: side 1–2 is 600 mm long and the opposite side 3–4 602 mm (they may differ by 1 mm)'
		);
		// within tolerance: 0.8 mm and its angle: atan(0.0008 / 0.4) = 0.115° < 0.5°
		expect(
			issues(
				withCorners([
					[0.7, 0, 0.3],
					[1.3, 0, 0.3],
					[1.3008, 0, 0.7],
					[0.7, 0, 0.7]
				])
			)
		).toEqual([]);
	});

	it('corners not a rectangle: a parallelogram with equal opposite sides and 1° off square', () => {
		const s = 0.4 * Math.sin((1 * Math.PI) / 180),
			c = 0.4 * Math.cos((1 * Math.PI) / 180);
		const msgs = issues(
			withCorners([
				[0.7, 0, 0.3],
				[1.3, 0, 0.3],
				[1.3 + s, 0, 0.3 + c],
				[0.7 + s, 0, 0.3 + c]
			])
		);
		expect(msgs).toEqual([
			'corners: the corners are not a rectangle: the angle at corner 1 is 89° (must be 90° within 0.5°); give the corners in order going round the plate'
		]);
	});

	it('corners in the wrong order (crossing): the angle message', () => {
		const msgs = issues(
			withCorners([
				[0.7, 0, 0.3],
				[1.3, 0, 0.7],
				[1.3, 0, 0.3],
				[0.7, 0, 0.7]
			])
		);
		expect(msgs.some((m) => m.startsWith('corners: the corners are not a rectangle: '))).toBe(true);
	});

	it('corners not in one plane: each corner 1.5 mm off the plane through their centre (one corner raised by 6 mm)', () => {
		// a corner raised by h in a rectangle puts every corner h/4 off the mean plane (the twist of a quadrilateral)
		const msgs = issues(
			withCorners([
				[0.7, 0, 0.3],
				[1.3, 0, 0.3],
				[1.3, 0.006, 0.7],
				[0.7, 0, 0.7]
			])
		);
		expect(msgs[0]).toMatch(
			/^corners: the corners are not in one plane: each lies 1\.5 mm off the plane through their centre \(tolerance 1 mm\)$/
		);
	});

	it('degenerate corners and sides under 5 cm', () => {
		expect(
			issues(
				withCorners([
					[0, 0, 0],
					[0.01, 0, 0],
					[0.01, 0, 0.5],
					[0, 0, 0.5]
				])
			)[0]
		).toBe('corners: corners 1 and 2 are 10 mm apart; each side of a plate must be at least 50 mm');
		expect(issues({ ...good, corners: [[0, 0, 0]] })[0]).toMatch(/^corners: must be four corners/);
		expect(issues({ ...good, corners: [[0, 0, NaN], ...good.corners.slice(1)] })[0]).toMatch(/^corners\.0\.2: must be a (finite )?number/);
	});

	it('axes not orthonormal: says by how much and that nothing is corrected', () => {
		const axes = [
			[1, 0, 0],
			[0, 0, -1],
			[0, 1.001, 0]
		];
		// column 2 = (0, 0, 1.001): its dot with itself is 1.002001, 0.002 from 1
		expect(issues({ ...good, axes })).toEqual([
			"axes: the plate axes (the columns) are not orthonormal: the columns' dot products differ from the identity by up to 0.002 (tolerance 0.000001); they are not corrected for you — enter unit, mutually perpendicular axes to at least 7 decimals"
		]);
		// 7-decimal rounding of a rotation by 30° about lab Y keeps within 1e-6: accepted as entered
		const c = Number(Math.cos(Math.PI / 6).toFixed(7)),
			s = Number(Math.sin(Math.PI / 6).toFixed(7));
		const x: Vec3 = [c, 0, -s],
			y: Vec3 = [s, 0, c],
			z: Vec3 = [0, -1, 0];
		// x × y = (0·c − (−s)·0, (−s)·s − c·c, c·0 − 0·s) = (0, −1, 0) = z: right-handed
		const rows = [0, 1, 2].map((i) => [x[i], y[i], z[i]]);
		const corners = (
			[
				[-0.3, -0.2],
				[0.3, -0.2],
				[0.3, 0.2],
				[-0.3, 0.2]
			] as const
		).map(([a, b]) => [0, 1, 2].map((k) => a * x[k] + b * y[k]));
		expect(issues({ ...good, axes: rows, corners })).toEqual([]);
	});

	it('axes left-handed', () => {
		const axes = [
			[1, 0, 0],
			[0, 0, -1],
			[0, -1, 0]
		];
		expect(issues({ ...good, axes })).toEqual([
			'axes: the plate axes are left-handed (x × y = −z, determinant −1); plate axes must be right-handed (x × y = z): reverse one axis'
		]);
	});

	it('the z axis not the surface normal, or pointing up', () => {
		// plate z = lab X: 90° off the floor's normal
		const sideways = [
			[0, 0, 1],
			[0, 1, 0],
			[-1, 0, 0]
		];
		expect(issues({ ...good, axes: sideways })).toEqual([
			'axes: the plate z axis (column 3) must be the surface normal, but it is 90° off perpendicular to the surface the corners span (tolerance 0.5°)'
		]);
		// z up: x = lab X, y = −lab Z, z = lab Y (right-handed: X × (−Z) = Y)
		const up = [
			[1, 0, 0],
			[0, 0, 1],
			[0, -1, 0]
		];
		expect(issues({ ...good, axes: up })).toEqual([
			'axes: the plate z axis (column 3) points up, out of the surface (lab Y component 1); it must point into the plate (down for a plate in the floor): reverse z and one of x, y'
		]);
		// 1° tilt of the axes against level corners: beyond 0.5°
		const t = (1 * Math.PI) / 180;
		const tilted = [
			[1, 0, 0],
			[0, Math.sin(t), -Math.cos(t)],
			[0, Math.cos(t), Math.sin(t)]
		];
		expect(issues({ ...good, axes: tilted })[0]).toMatch(
			/^axes: the plate z axis \(column 3\) must be the surface normal, but it is 1° off/
		);
	});

	it('depth in [0, 0.2] m and the output kind', () => {
		expect(issues({ ...good, originDepthM: -0.001 })).toEqual([
			"originDepthM: must be from 0 to 0.2 m (the measuring origin's depth below the top surface)"
		]);
		expect(issues({ ...good, originDepthM: 0.21 })).toHaveLength(1);
		expect(issues({ ...good, originDepthM: 0 })).toEqual([]);
		expect(issues({ ...good, originDepthM: 0.2 })).toEqual([]);
		expect(issues({ ...good, output: 'forces' })).toEqual(['output: must be "forces-cop" or "forces-moments"']);
	});
});

describe('plate geometry', () => {
	it('centre, normal, measuring origin, outline', () => {
		plateCentre(good).forEach((v, k) => expect(v).toBeCloseTo([1, 0, 0.5][k], 15));
		expect(plateNormal(good)).toEqual([0, -1, 0]);
		const o = plateOrigin(good);
		expect(o[0]).toBe(1);
		expect(o[1]).toBeCloseTo(-0.04, 15);
		expect(plateOutline(good)).toEqual([
			{ x: 0.7, z: 0.3 },
			{ x: 1.3, z: 0.3 },
			{ x: 1.3, z: 0.7 },
			{ x: 0.7, z: 0.7 }
		]);
	});

	it('plateContains: top view, with a margin (heights do not matter for a plate in the floor)', () => {
		expect(plateContains(good, [1, 0, 0.5])).toBe(true);
		expect(plateContains(good, [1, 0.5, 0.5])).toBe(true);
		expect(plateContains(good, [1.305, 0, 0.5])).toBe(false);
		expect(plateContains(good, [1.305, 0, 0.5], 0.01)).toBe(true);
		// 6 mm past a corner in X and Z: √(0.006² + 0.006²) = 8.5 mm outside
		expect(plateContains(good, [1.306, 0, 0.706], 0.008)).toBe(false);
		expect(plateContains(good, [1.306, 0, 0.706], 0.009)).toBe(true);
		expect(plateContains(good, [NaN, 0, 0.5], 1)).toBe(false);
		// a negative margin shrinks the outline
		expect(plateContains(good, [1.29, 0, 0.5], -0.02)).toBe(false);
		expect(plateContains(good, [1.27, 0, 0.5], -0.02)).toBe(true);
	});
});
