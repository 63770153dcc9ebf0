// The contact threshold as a run option: a half-sine vertical force F(t) = P·sin(π (t − t0) / T) crosses F* at
// t0 + (T/π)·asin(F*/P) (closed form), so raising the threshold moves the contact's first loaded sample later by
// exactly what that formula gives. Forces at the angle rate (ratio 1, no filter) so no filtering moves the crossing.
import { describe, expect, it } from 'vitest';
import { groundAtAngleRate, type ForceInput } from '../../../src/lib/server/runs/compute';
import { runOptionsSchema } from '../../../src/lib/processing/pipeline';
import { floorPlate } from '../processing/forces/plates';

const hz = 200,
	n = 400,
	P = 700,
	t0 = 0.5,
	T = 0.6;
const time = Float64Array.from({ length: n }, (_, k) => k / hz);
// the plate measures the load on it: +z (into the floor) for a person standing on it; CoP at the plate's centre
const fz = Float64Array.from(time, (t) => (t > t0 && t < t0 + T ? P * Math.sin((Math.PI * (t - t0)) / T) : 0));
const plate = floorPlate('plate1', { x: [0, 0.6], z: [0, 0.4] });
const zero = new Float64Array(n);
const channel = (name: string, values: Float64Array) => ({ name, values });
const force: ForceInput = {
	fileName: 'walk.forces.csv',
	forceHz: hz,
	ratio: 1,
	plates: [plate],
	recording: {
		time,
		sampleHz: hz,
		channels: [
			channel('plate1.force.x', zero),
			channel('plate1.force.y', zero),
			channel('plate1.force.z', fz),
			channel('plate1.moment.x', zero),
			channel('plate1.moment.y', zero),
			channel('plate1.moment.z', zero)
		],
		warnings: [],
		header: [],
		delimiter: ','
	}
};
const firstLoaded = (thresholdN: number) => Math.ceil((t0 + (T / Math.PI) * Math.asin(thresholdN / P)) * hz - 1e-9);

describe('contactThresholdN', () => {
	it('is 20 N when the run does not set it, and moves the contact as the closed form says when it does', () => {
		for (const [opts, threshold] of [
			[{}, 20],
			[{ contactThresholdN: 100 }, 100]
		] as const) {
			const options = runOptionsSchema.parse({ cutoffHz: null, forceCutoffHz: null, ...opts });
			const g = groundAtAngleRate({ sampleHz: hz, time }, force, options);
			expect(g.thresholdN).toBe(threshold);
			expect(g.contacts).toHaveLength(1);
			expect(g.contacts[0].start).toBe(firstLoaded(threshold));
		}
	});
	it('is refused outside 5–200 N with its field named', () => {
		const r = runOptionsSchema.safeParse({ contactThresholdN: 2 });
		expect(r.success).toBe(false);
		expect(r.error?.issues[0]).toMatchObject({ path: ['contactThresholdN'], message: 'must be from 5 to 200 N' });
	});
});
