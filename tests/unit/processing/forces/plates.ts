// The plate the force-plate tests share: 0.6 m along lab X × 0.4 m along lab Z, centre (1, 0, 0.5);
// plate x = lab X, y = lab Z, z = −lab Y (down, into the plate); measuring origin 0.04 m below the surface.
import type { ForcePlate } from '../../../../src/lib/processing/forces';

export const plate1: ForcePlate = {
	name: 'plate1',
	corners: [
		[0.7, 0, 0.3],
		[1.3, 0, 0.3],
		[1.3, 0, 0.7],
		[0.7, 0, 0.7]
	],
	axes: [
		[1, 0, 0],
		[0, 0, -1],
		[0, 1, 0]
	],
	originDepthM: 0.04,
	output: 'forces-moments'
};
