// The force-plate form and drawing, pure parts: the common orientations are right-handed rotations with z into a level
// floor, the form reads back what it shows, a new plate is valid, and the top view puts lab X to the right, Z down.
import { describe, expect, it } from 'vitest';
import { forcePlateSchema, type Mat3, type Vec3 } from '../../../src/lib/processing/forces/plate';
import { PLATE_ORIENTATIONS, orientationOf } from '../../../src/lib/types/equipment';
import { newPlate, plateFormValues, plateFromForm } from '../../../src/lib/server/equipment/form';
import { floorPlan } from '../../../src/lib/components/equipment/floor-plan';

const column = (R: Mat3, k: number): Vec3 => [R[0][k], R[1][k], R[2][k]];
// the cross product's component formula (any vector-algebra text)
const cross = (a: Vec3, b: Vec3): Vec3 => [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
const LAB = { X: [1, 0, 0], Y: [0, 1, 0], Z: [0, 0, 1] } as const;
const neg = (v: readonly number[]) => v.map((x) => (x === 0 ? 0 : -x));

describe('the common plate orientations', () => {
	// what each label says, axis by axis, in lab axes (X anterior, Y up, Z right)
	const said: Record<string, [readonly number[], readonly number[]]> = {
		'x-anterior': [LAB.X, LAB.Z],
		'x-right': [LAB.Z, neg(LAB.X)],
		'x-posterior': [neg(LAB.X), neg(LAB.Z)],
		'x-left': [neg(LAB.Z), LAB.X]
	};
	for (const o of PLATE_ORIENTATIONS) {
		it(`${o.id}: columns are the labelled axes, z = x × y points down, and the plate schema accepts it`, () => {
			const [x, y] = said[o.id];
			expect(column(o.axes, 0)).toEqual(x);
			expect(column(o.axes, 1)).toEqual(y);
			expect(cross(column(o.axes, 0), column(o.axes, 1)).map((v) => v + 0)).toEqual(column(o.axes, 2).map((v) => v + 0));
			expect(column(o.axes, 2).map((v) => v + 0)).toEqual(neg(LAB.Y).map((v) => v + 0));
			expect(forcePlateSchema.safeParse({ ...newPlate([]), axes: o.axes }).success).toBe(true);
			expect(orientationOf(o.axes)).toBe(o.id);
		});
	}
	it('anything else is custom', () => {
		expect(
			orientationOf([
				[0, 0, 1],
				[1, 0, 0],
				[0, 1, 0]
			])
		).toBe('custom');
	});
});

describe('the plate form', () => {
	it('starts with a valid 0.6 m × 0.4 m plate at the origin, named after the plates in use', () => {
		const plate = newPlate(['plate1', 'plate2']);
		expect(plate.name).toBe('plate3');
		expect(forcePlateSchema.parse(plate)).toEqual(plate);
	});

	it('reads back what it shows, the depth in millimetres', () => {
		const plate = { ...newPlate([]), originDepthM: 0.035, axes: PLATE_ORIENTATIONS[2].axes };
		const values = plateFormValues(plate);
		expect(values.originDepthMm).toBe('35');
		expect(values.orientation).toBe('x-posterior');
		expect(plateFromForm(values)).toEqual(plate);
	});

	it('leaves an empty number missing and a typed word NaN, so the schema names the field', () => {
		const values = { ...plateFormValues(newPlate([])), 'corners.1.z': 'abc', surfaceY: '' };
		const r = forcePlateSchema.safeParse(plateFromForm(values));
		expect(r.success).toBe(false);
		const paths = r.error!.issues.map((i) => i.path.join('.'));
		expect(paths).toEqual(expect.arrayContaining(['corners.1.2', 'corners.0.1', 'corners.3.1']));
	});

	it('refuses an orientation that is not offered', () => {
		expect(() => plateFromForm({ ...plateFormValues(newPlate([])), orientation: 'sideways' })).toThrow(/Choose how the plate lies/);
	});
});

describe('the top view of the floor', () => {
	it('puts lab X to the right and lab Z down the page, the origin and every plate inside the drawing', () => {
		const plan = floorPlan([
			{ ...newPlate([]), name: 'a' },
			{
				...newPlate([]),
				name: 'b',
				corners: [
					[1, 0, -0.2],
					[1.6, 0, -0.2],
					[1.6, 0, 0.2],
					[1, 0, 0.2]
				]
			}
		]);
		const [a, b] = plan.plates;
		expect(b.cx).toBeGreaterThan(a.cx); // further anterior: further right
		expect(b.cx - a.cx).toBeCloseTo(1.3 * plan.scale, 9);
		expect(a.cy).toBeCloseTo(plan.origin.y, 9); // both centred on Z = 0
		for (const p of plan.plates)
			for (const pt of p.points.split(' ').map((s) => s.split(',').map(Number))) {
				expect(pt[0]).toBeGreaterThan(0);
				expect(pt[0]).toBeLessThan(plan.width);
				expect(pt[1]).toBeGreaterThan(0);
				expect(pt[1]).toBeLessThan(plan.height);
			}
		// plate x along lab X: an arrow to the right; plate y along lab Z: an arrow down the page; z into the floor
		const [x, y] = a.arrows;
		expect(x.x2).toBeGreaterThan(x.x1);
		expect(x.y2).toBeCloseTo(x.y1, 9);
		expect(y.y2).toBeGreaterThan(y.y1);
		expect(a.zMark).toBe('down');
	});
});
