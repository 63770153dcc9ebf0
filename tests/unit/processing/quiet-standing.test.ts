// Quiet standing, closed form: both legs on one still pelvis, the right foot on a plate, the GRF and free moment at a known
// point. Each leg joint's moment equals a hand calculation of statics (Newton's second law with zero acceleration: the
// joint moment balances the moments of the weights and of the GRF beyond it, e.g. Winter 2009, "Biomechanics and Motor
// Control of Human Movement", ch. 5, link-segment statics — from memory). Segment numbers: Dempster via Winter (2009)
// Table 4.1 for a 75 kg, 1.80 m man (foot 1.45 % of body mass, COM at 50 % of its length; lengths from stature
// proportions), checked against the model below.
import { describe, expect, it } from 'vitest';
import { buildSessionModel } from '../../../src/lib/processing/session-model';
import { runPipeline } from '../../../src/lib/processing/pipeline';
import { plateToLab, labToPlate, findContacts } from '../../../src/lib/processing/forces';
import { floorPlate } from './forces/plates';
import { forcePlateSchema } from '../../../src/lib/processing/forces';
import { makeRecording } from './helpers';

const built = buildSessionModel(
	{ sex: 'male', bodyMass: 75, stature: 1.8 },
	{ table: 'dempster-winter-2009', limbs: ['right.leg', 'left.leg'], pelvis: {} }
);
const seg = (key: string) => built.parameters.segments.find((s) => s.key === key)!;

// Hand numbers (m, kg, N): thigh length Lt = 0.245 H = 0.441, shank Ls = 0.246 H = 0.4428, foot mass mf = 0.0145 × 75 =
// 1.0875, its COM df = 0.5 × 0.2736 = 0.1368 ahead of the ankle; half hip width 0.191 H / 2 = 0.1719; g = 9.81.
const Lt = 0.441,
	Ls = 0.4428,
	mf = 1.0875,
	df = 0.1368,
	halfHip = 0.1719,
	g = 9.81;
const ha = 0.07; // the ankle joint centre 7 cm above the floor (Y = 0): pelvis at Lt + Ls + ha
// The GRF on the right foot: 40 N anterior, 600 N up, at 10 cm ahead of the ankle and 2 cm medial of it; free moment 1.5 N·m about +Y.
const Fx = 40,
	Fy = 600,
	xc = 0.1,
	dz = -0.02,
	T = 1.5;
// Statics (moments on the distal part, lab axes, at q = 0 every joint axis is a lab axis): about Z only the foot's weight
// (ahead of the ankle by df) and the GRF (Fy at xc, Fx at the CoP's depth below the joint) have lever arms, the thigh and
// shank COMs lying straight below the joints: M_z = mf g df − xc Fy − h Fx with h the joint's height above the floor.
// About X: M_x = dz Fy; about Y: M_y = −dz Fx − T.
const wf = mf * g * df; // 1.0875 × 9.81 × 0.1368 = 1.45943370 N·m
const expected: Record<string, number> = {
	'right.ankle.dorsiflexion': wf - xc * Fy - ha * Fx, // 1.45943370 − 60 − 2.8 = −61.3405663
	'right.ankle.inversion': dz * Fy, // −12 (about +X on the right foot)
	'right.knee.flexion': -(wf - xc * Fy - (ha + Ls) * Fx), // knee axis −Z: −(1.4594337 − 60 − 20.512) = 79.0525663
	'right.hip.flexion': wf - xc * Fy - (ha + Ls + Lt) * Fx, // 1.4594337 − 60 − 38.152 = −96.6925663
	'right.hip.adduction': dz * Fy, // −12: an abductor moment
	'right.hip.internalRotation': -dz * Fx - T, // 0.8 − 1.5 = −0.7
	// the left foot in the air: its weight alone
	'left.ankle.dorsiflexion': wf,
	'left.ankle.inversion': 0,
	'left.knee.flexion': -wf,
	'left.hip.flexion': wf,
	'left.hip.adduction': 0,
	'left.hip.internalRotation': 0
};
const written: Record<string, number> = {
	'right.ankle.dorsiflexion': -61.3405663,
	'right.knee.flexion': 79.0525663,
	'right.hip.flexion': -96.6925663,
	'right.hip.internalRotation': -0.7
};

describe('quiet standing: hip, knee and ankle moments against the hand calculation', () => {
	it('the model has the hand numbers', () => {
		expect(seg('right.thigh').length.value).toBeCloseTo(Lt, 12);
		expect(seg('right.shank').length.value).toBeCloseTo(Ls, 12);
		expect(seg('right.foot').mass.value).toBeCloseTo(mf, 12);
		expect(seg('right.foot').comDistance.value).toBeCloseTo(df, 12);
		expect(built.pelvis!.hipWidthM / 2).toBeCloseTo(halfHip, 12);
		for (const [k, v] of Object.entries(written)) expect(expected[k]).toBeCloseTo(v, 7);
	});

	// a plate under the right foot, turned 90° about the vertical and offset, measuring origin 4 cm deep
	// plate x = lab Z, plate y = lab −X, plate z = x × y = lab −Y (into the floor): right-handed, as the plate schema requires
	const plate = floorPlate('plate1', { x: [-0.2, 0.4], z: [0, 0.6], plateX: [0, 0, 1], plateY: [-1, 0, 0] });

	it('through runPipeline with the plate signals, a contact assigned by the model, 1e-9 N·m', () => {
		expect(forcePlateSchema.safeParse(plate).success).toBe(true);
		const frames = 200,
			hz = 100;
		const py = Lt + Ls + ha;
		const rec = makeRecording(built, frames, hz, (name) => (name === 'pelvis.py' ? py : 0));
		const cop = new Float64Array(3 * frames),
			grf = new Float64Array(3 * frames),
			free = new Float64Array(3 * frames);
		for (let k = 0; k < frames; k++) {
			cop.set([xc, 0, halfHip + dz], 3 * k);
			grf.set([Fx, Fy, 0], 3 * k);
			free.set([0, T, 0], 3 * k);
		}
		// through what the plate would measure and back (forces-moments, depth, rotated axes)
		const loads = plateToLab(plate, labToPlate(plate, { grf, cop, freeMoment: free }));
		const contacts = findContacts(plate, loads, { sampleHz: hz });
		expect(contacts).toHaveLength(1);
		const r = runPipeline(built, rec, { cutoffHz: 6 }, undefined, { ground: { plates: [{ plate, loads }], contacts } });
		expect(r.ground!.contacts[0]).toMatchObject({ id: 'plate1#0', foot: 'right', assignedBy: 'model', used: true, shared: false });
		for (const d of r.dofs) {
			const want = expected[d.name];
			for (const k of [0, 50, 100, 199]) expect(Math.abs(d.moment[k] - want), `${d.name} at ${k}`).toBeLessThan(1e-9);
		}
		// % body weight: 600 N of 75 × 9.81 = 735.75 N is 81.5495 %
		expect(r.ground!.plates[0].grfPercentBW[1]).toBeCloseTo((100 * 600) / 735.75, 9);
		expect(r.ground!.bodyWeightN).toBeCloseTo(735.75, 9);
	});

	it('without the ground data the right leg carries only its own weight (the left leg unchanged)', () => {
		const rec = makeRecording(built, 100, 100, (name) => (name === 'pelvis.py' ? 1 : 0));
		const r = runPipeline(built, rec, { cutoffHz: 6 });
		const at = (n: string) => r.dofs.find((d) => d.name === n)!.moment[50];
		expect(at('right.hip.flexion')).toBeCloseTo(wf, 9);
		expect(at('left.hip.flexion')).toBeCloseTo(wf, 9);
		expect(r.feet!.right!.heel[1 + 150]).toBeCloseTo(1 - Lt - Ls, 9);
	});
});
