// The force plates the tests share, and a builder for a rectangular plate set in the floor (lab Y up, top surface at Y = 0).
import type { ForcePlate, Vec3 } from '../../../../src/lib/processing/forces';

type FloorDirection = [1, 0, 0] | [-1, 0, 0] | [0, 0, 1] | [0, 0, -1];

/**
 * A plate in the floor covering lab X from x[0] to x[1] and lab Z from z[0] to z[1] (metres, written as given, no
 * arithmetic on them). `plateX` / `plateY` are the lab directions of the plate's x and y axes (default lab X and lab Z);
 * plate z is always lab −Y (down, into the plate). Corners go round from the corner where plate x and y are least:
 * along plate x, then along plate y, then back.
 */
export function floorPlate(
	name: string,
	o: {
		x: [number, number];
		z: [number, number];
		plateX?: FloorDirection;
		plateY?: FloorDirection;
		depth?: number;
		output?: ForcePlate['output'];
	}
): ForcePlate {
	const { x, z, plateX = [1, 0, 0], plateY = [0, 0, 1], depth = 0.04, output = 'forces-moments' } = o;
	/** The corner `u` of the way along plate x and `v` along plate y (each 0 or 1). */
	const corner = (u: 0 | 1, v: 0 | 1): Vec3 => {
		// lab component i is driven by whichever plate axis lies along it; a negative direction runs the range backwards
		const at = (i: 0 | 2, range: [number, number]) => {
			const [dir, step] = plateX[i] !== 0 ? [plateX[i], u] : [plateY[i], v];
			return range[dir > 0 ? step : 1 - step];
		};
		return [at(0, x), 0, at(2, z)];
	};
	return {
		name,
		corners: [corner(0, 0), corner(1, 0), corner(1, 1), corner(0, 1)],
		// row i holds lab component i of plate x, plate y and plate z (= lab −Y)
		axes: [0, 1, 2].map((i) => [plateX[i], plateY[i], i === 1 ? -1 : 0]) as ForcePlate['axes'],
		originDepthM: depth,
		output
	};
}

/** 0.6 m along lab X × 0.4 m along lab Z, centre (1, 0, 0.5); plate x = lab X, y = lab Z, z = −lab Y; origin 0.04 m deep. */
export const plate1 = floorPlate('plate1', { x: [0.7, 1.3], z: [0.3, 0.7] });

/**
 * plate1 turned 90° about lab Y and moved: plate x = lab −Z, y = lab X, z = −lab Y (x × y = z: right-handed);
 * centre (2.5, 0, −1.2), 0.6 m along plate x, 0.4 m along plate y; d = 0.05 m.
 */
export const plate2 = floorPlate('plate2', { x: [2.3, 2.7], z: [-1.5, -0.9], plateX: [0, 0, -1], plateY: [1, 0, 0], depth: 0.05 });
