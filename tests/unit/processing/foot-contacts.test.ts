// Foot assignment of plate contacts and the gait set-up (both legs on one pelvis). Outside sources: plane geometry by hand
// (points over a rectangle), forward kinematics of a hanging leg by hand (the ankle straight below the hip).
import { describe, expect, it } from 'vitest';
import { assignContacts, contactIds, footPoints } from '../../../src/lib/processing/foot-contacts';
import { buildSessionModel, sessionSetupProblems } from '../../../src/lib/processing/session-model';
import type { Contact } from '../../../src/lib/processing/forces';
import { floorPlate } from './forces/plates';

// two 0.6 m × 0.4 m plates in the floor, plate x = lab X, y = lab Z, origin 4 cm deep
const p1 = floorPlate('plate1', { x: [0, 0.6], z: [0, 0.4] }),
	p2 = floorPlate('plate2', { x: [1, 1.6], z: [-0.4, 0] });
const contact = (plateName: string, start: number, end: number): Contact => ({
	plate: plateName,
	start,
	end,
	clipped: false,
	offPlate: false,
	offPlateAt: null,
	maxOutsideM: 0,
	foot: null,
	shared: false
});
/** A foot path: ankle at (x(k), 0.08, z), toe 0.25 m ahead. */
const path = (n: number, x: (k: number) => number, z: number) => {
	const heel = new Float64Array(3 * n),
		toe = new Float64Array(3 * n);
	for (let k = 0; k < n; k++) {
		heel.set([x(k), 0.08, z], 3 * k);
		toe.set([x(k) + 0.25, 0.08, z], 3 * k);
	}
	return { heel, toe };
};

describe('assignContacts', () => {
	const n = 100;
	const right = path(n, () => 0.2, 0.2); // over plate1 throughout
	const left = path(n, (k) => -1 + 0.03 * k, -0.2); // walks over plate2 (x 1…1.6, z −0.4…0) from k ≈ 67 to 78
	it('a contact goes to the foot over the plate for most of it; neither → null', () => {
		const a = assignContacts([contact('plate1', 10, 60), contact('plate2', 66, 79), contact('plate2', 0, 5)], [p1, p2], { left, right });
		expect(a.map((c) => [c.id, c.foot, c.shared, c.assignedBy])).toEqual([
			['plate1#0', 'right', false, 'model'],
			['plate2#1', 'left', false, 'model'],
			['plate2#0', null, false, null]
		]);
		expect(a[0].overShare).toEqual({ left: 0, right: 1 });
		// left ankle x = −1 + 0.03 k, toe + 0.25: both within [0.95, 1.65] (5 cm margin) for k = 65…80 → 14 of 14 samples 66…79
		expect(a[1].overShare.left).toBe(1);
	});
	it('both feet over the plate at once → shared, no foot', () => {
		const both = path(n, () => 0.1, 0.1);
		const a = assignContacts([contact('plate1', 10, 60)], [p1], { left: both, right });
		expect(a[0]).toMatchObject({ foot: null, shared: true, assignedBy: null, bothShare: 1 });
	});
	it('with the CoP given: a foot swinging past the standing one does not share the contact; two feet standing on it do', () => {
		// plate1 is x 0…0.6, z 0…0.4. The right foot stands at z 0.2 (ankle x 0.1, toe x 0.35); the left swings past at z 0.05
		// (0.15 m across: a narrow step), over the plate for samples 20…50. The CoP lies under the right foot: (0.2, 0, 0.2),
		// 0 m from its ankle-to-toe line and 0.15 m from the left's (plane geometry) — only the right foot bears it.
		const stand = path(n, () => 0.1, 0.2);
		const swing = path(n, (k) => (k >= 20 && k <= 50 ? 0.1 : -2), 0.05);
		const under = (z: number) => Float64Array.from({ length: 3 * n }, (_, i) => [0.2, 0, z][i % 3]);
		const alone = assignContacts([contact('plate1', 10, 60)], [p1], { left: swing, right: stand }, { cop: { plate1: under(0.2) } });
		expect(alone[0]).toMatchObject({ foot: 'right', shared: false, assignedBy: 'model', bothShare: 0 });
		// without the CoP the same geometry is flagged shared (both feet over the plate for 31 of 51 samples)
		const blind = assignContacts([contact('plate1', 10, 60)], [p1], { left: swing, right: stand });
		expect(blind[0]).toMatchObject({ foot: null, shared: true });
		// both feet standing on the plate with the CoP between them (z 0.125: 0.075 m from each line, both within 8 cm) → shared
		const pair = path(n, () => 0.1, 0.05);
		const two = assignContacts([contact('plate1', 10, 60)], [p1], { left: pair, right: stand }, { cop: { plate1: under(0.125) } });
		expect(two[0]).toMatchObject({ foot: null, shared: true });
	});
	it('a foot over the plate for less than half the contact does not get it', () => {
		const passing = path(n, (k) => (k < 40 ? 0.2 : 3), 0.2);
		const a = assignContacts([contact('plate1', 10, 89)], [p1], { right: passing });
		expect(a[0].overShare.right).toBeCloseTo(30 / 80, 12);
		expect(a[0].foot).toBeNull();
	});
	it('overrides by contact id win; unknown ids and feet are refused with the id', () => {
		const a = assignContacts([contact('plate1', 10, 60)], [p1], { left, right }, { overrides: { 'plate1#0': 'left' } });
		expect(a[0]).toMatchObject({ foot: 'left', assignedBy: 'user' });
		expect(() => assignContacts([contact('plate1', 10, 60)], [p1], { right }, { overrides: { 'plate1#3': 'left' } })).toThrow(
			/contact "plate1#3" names no contact of this trial \(plate1#0\)/
		);
		expect(() => assignContacts([contact('plate1', 10, 60)], [p1], { right }, { overrides: { 'plate1#0': 'both' as never } })).toThrow(
			/must be "left", "right" or null/
		);
		expect(() => assignContacts([contact('plate9', 10, 60)], [p1], { right })).toThrow(
			/plate "plate9", which is not among the plates given \(plate1\)/
		);
	});
	it('ids count each plate’s contacts in time order', () => {
		expect(contactIds([contact('b', 50, 60), contact('a', 5, 9), contact('b', 1, 3)])).toEqual(['b#1', 'a#0', 'b#0']);
	});
});

describe('gait set-up: both legs on one pelvis', () => {
	const body = { sex: 'female' as const, bodyMass: 60, stature: 1.65 };
	it('refuses arms and per-limb bases with the field named', () => {
		expect(sessionSetupProblems({ table: 'de-leva-1996', limbs: ['right.leg', 'right.arm'], pelvis: {} })).toEqual([
			'limbs: a pelvis set-up carries legs only (right.leg, left.leg); remove right.arm'
		]);
		expect(
			sessionSetupProblems({ table: 'de-leva-1996', limbs: ['right.leg'], pelvis: {}, bases: { 'right.leg': { kind: 'moving' } } })[0]
		).toMatch(/^bases\.right\.leg: with a pelvis both legs hang from it, so right\.leg takes no base of its own/);
		expect(sessionSetupProblems({ table: 'de-leva-1996', limbs: ['right.leg'], pelvis: { hipWidthM: 2 } })).toEqual([
			'pelvis.hipWidthM: must be from 0.1 to 0.5 m (the distance between the hip joint centres)'
		]);
	});
	it('six pelvis coordinates first, reported as base; hip joint centres at ±hipWidth/2 on the pelvis Z axis', () => {
		const b = buildSessionModel(body, { table: 'de-leva-1996', limbs: ['left.leg', 'right.leg'], pelvis: { hipWidthM: 0.2 } });
		expect(b.expected.slice(0, 6).map((e) => [e.name, e.kind])).toEqual([
			['pelvis.px', 'position'],
			['pelvis.py', 'position'],
			['pelvis.pz', 'position'],
			['pelvis.rx', 'angle'],
			['pelvis.ry', 'angle'],
			['pelvis.rz', 'angle']
		]);
		expect(b.dofs.slice(0, 6).every((d) => d.base && d.limb === 'pelvis')).toBe(true);
		expect(b.pelvis).toEqual({ hipWidthM: 0.2, source: 'entered in the session set-up' });
		// pelvis at (1, 0.9, 0.5) turned 90° about Y (ry): its Z axis points along lab +X... Rx·Ry(90°)·Rz: z → (1, 0, 0)
		const q = b.dofs.map((d) => ({ 'pelvis.px': 1, 'pelvis.py': 0.9, 'pelvis.pz': 0.5, 'pelvis.ry': Math.PI / 2 })[d.name] ?? 0);
		const feet = footPoints(
			b,
			q.map((v) => [v])
		);
		const legs = b.parameters.segments;
		const L = (k: string) => legs.find((s) => s.key === k)!.length.value;
		// right hip at pelvis + 0.1 × (1, 0, 0); ankle straight below by thigh + shank; toe one foot length along the
		// turned foot X axis (Ry(90°) takes x to −z)
		const h = feet.right!.heel;
		expect(h[0]).toBeCloseTo(1.1, 12);
		expect(h[1]).toBeCloseTo(0.9 - L('right.thigh') - L('right.shank'), 12);
		expect(h[2]).toBeCloseTo(0.5, 12);
		const t = feet.right!.toe;
		expect(t[0]).toBeCloseTo(1.1, 12);
		expect(t[2]).toBeCloseTo(0.5 - L('right.foot'), 12);
		expect(feet.left!.heel[0]).toBeCloseTo(0.9, 12);
		expect(Array.from(feet.pelvis)).toEqual([1, 0.9, 0.5].map((v) => expect.closeTo(v, 12)));
	});
	it('a default hip width from the stature, written to the notes', () => {
		const b = buildSessionModel(body, { table: 'de-leva-1996', limbs: ['right.leg', 'left.leg'], pelvis: {} });
		expect(b.pelvis!.hipWidthM).toBeCloseTo(0.191 * 1.65, 12);
		expect(b.parameters.notes.some((n) => n.includes('The pelvis is massless') && n.includes('0.191 × stature'))).toBe(true);
	});
});
