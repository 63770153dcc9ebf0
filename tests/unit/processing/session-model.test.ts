// Session model: point-mass loads, base orientations and moving bases, checked against hand-worked statics.
import { describe, expect, it } from 'vitest';
import { scaleLimbs, type ParticipantBody } from '../../../src/lib/anthropometry';
import {
	addPointMass,
	buildSessionModel,
	cardanXYZ,
	sessionSetupProblems,
	SessionModelError
} from '../../../src/lib/processing/session-model';
import { runPipeline } from '../../../src/lib/processing/pipeline';
import { modelProblems, type Mat3, type Vec3 } from '../../../src/lib/dynamics';
import { deg, makeRecording } from './helpers';

const person: ParticipantBody = { sex: 'female', bodyMass: 64.2, stature: 1.68 };
const G = 9.81;
const seg = (limb: 'right.arm' | 'right.leg', table: 'de-leva-1996' | 'dempster-winter-2009' = 'de-leva-1996') => {
	const s = scaleLimbs(person, table, [limb]).segments;
	return (name: string) => {
		const x = s.find((g) => g.segment === name)!;
		return { m: x.mass.value, L: x.length.value, d: x.comDistance.value };
	};
};
const momentOf = (r: ReturnType<typeof runPipeline>, dof: string) => r.dofs.find((d) => d.name === dof)!.moment;

describe('point-mass loads (parallel-axis theorem, e.g. Meriam & Kraige, Engineering Mechanics: Dynamics, §B/1)', () => {
	it('on the segment axis: the closed form I′ = I + m d² + mp e² about the new centre', () => {
		const r = addPointMass(
			2,
			[0, -0.2, 0],
			[
				[0.01, 0, 0],
				[0, 0.002, 0],
				[0, 0, 0.01]
			],
			1,
			[0, -0.5, 0]
		);
		expect(r.mass).toBe(3);
		expect(r.com[1]).toBeCloseTo(-0.3, 15);
		// d = 0.1 m (segment COM to new COM), e = 0.2 m (point to new COM): 0.01 + 2·0.01 + 1·0.04
		expect(r.inertia[0][0]).toBeCloseTo(0.07, 15);
		expect(r.inertia[2][2]).toBeCloseTo(0.07, 15);
		expect(r.inertia[1][1]).toBeCloseTo(0.002, 15);
	});

	it('off axis: equals the inertia about the joint point summed part by part, moved to the new centre', () => {
		const I: Mat3 = [
			[0.012, 0.001, 0],
			[0.001, 0.003, -0.0005],
			[0, -0.0005, 0.011]
		];
		const c: Vec3 = [0.01, -0.18, 0.005],
			p: Vec3 = [0.04, -0.31, -0.02];
		const m = 1.7,
			mp = 2.5;
		const r = addPointMass(m, c, I, mp, p);
		// second route: Steiner from each part's own centre to the origin, then back from the origin to the combined centre
		const steiner = (mass: number, v: number[]) => {
			const vv = v[0] ** 2 + v[1] ** 2 + v[2] ** 2;
			return [0, 1, 2].map((i) => [0, 1, 2].map((j) => mass * ((i === j ? vv : 0) - v[i] * v[j])));
		};
		const Sc = steiner(m, c),
			Sp = steiner(mp, p),
			Sn = steiner(m + mp, r.com);
		for (let i = 0; i < 3; i++) {
			expect(r.com[i]).toBeCloseTo((m * c[i] + mp * p[i]) / (m + mp), 15);
			for (let j = 0; j < 3; j++) expect(r.inertia[i][j]).toBeCloseTo(I[i][j] + Sc[i][j] + Sp[i][j] - Sn[i][j], 14);
		}
	});

	it('the loaded model still passes the engine schema, and the provenance keeps before and after', () => {
		const built = buildSessionModel(person, {
			table: 'de-leva-1996',
			limbs: ['right.arm'],
			loads: [{ limb: 'right.arm', segment: 'hand', massKg: 2, pointM: [0.02, -0.06, 0], label: 'box' }]
		});
		expect(modelProblems(built.model)).toEqual([]);
		expect(built.loadsApplied[0].before.mass).toBeCloseTo(seg('right.arm')('hand').m, 12);
		expect(built.loadsApplied[0].after.mass).toBeCloseTo(seg('right.arm')('hand').m + 2, 12);
		expect(built.parameters.model.bodies.find((b) => b.name === 'right.hand')!.mass).toBeCloseTo(built.loadsApplied[0].after.mass, 12);
		expect(built.parameters.notes.some((n) => n.includes('box'))).toBe(true);
	});

	it('static moments of a horizontal arm holding a point mass are Σ m g x by hand', () => {
		const s = seg('right.arm');
		const [u, f, h] = [s('upperarm'), s('forearm'), s('hand')];
		const box = { m: 2, y: -0.05 };
		const built = buildSessionModel(person, {
			table: 'de-leva-1996',
			limbs: ['right.arm'],
			loads: [{ limb: 'right.arm', segment: 'hand', massKg: box.m, pointM: [0, box.y, 0] }]
		});
		// shoulder flexed 90°: the whole arm points anterior (lab +X), horizontal
		const rec = makeRecording(built, 50, 100, (name) => (name === 'right.shoulder.flexion' ? 90 * deg : 0));
		const r = runPipeline(built, rec, { cutoffHz: 6 });
		const shoulder = G * (u.m * u.d + f.m * (u.L + f.d) + h.m * (u.L + f.L + h.d) + box.m * (u.L + f.L - box.y));
		const elbow = G * (f.m * f.d + h.m * (f.L + h.d) + box.m * (f.L - box.y));
		const wrist = G * (h.m * h.d + box.m * -box.y);
		for (let k = 0; k < 50; k++) {
			expect(momentOf(r, 'right.shoulder.flexion')[k]).toBeCloseTo(shoulder, 9);
			expect(momentOf(r, 'right.elbow.flexion')[k]).toBeCloseTo(elbow, 9);
			expect(momentOf(r, 'right.wrist.flexion')[k]).toBeCloseTo(wrist, 9);
			expect(Math.abs(momentOf(r, 'right.shoulder.abduction')[k])).toBeLessThan(1e-9);
		}
		// the shoulder reaction carries the whole arm's and the box's weight, upward, in ground axes
		const F = r.reactions.find((x) => x.joint === 'right.shoulder')!.force;
		expect(F[1]).toBeCloseTo(G * (u.m + f.m + h.m + box.m), 9);
		expect(r.reactions.map((x) => x.joint)).toEqual(['right.shoulder', 'right.elbow', 'right.wrist']);
		expect(r.dofs[0].momentPerKg[0]).toBeCloseTo(shoulder / person.bodyMass, 12);
	});
});

describe('thigh-on-seat base', () => {
	const s = seg('right.leg', 'dempster-winter-2009');
	const [t, sh, ft] = [s('thigh'), s('shank'), s('foot')];
	const load = { m: 1.5, y: -(sh.L - 0.05) };
	const built = buildSessionModel(person, {
		table: 'dempster-winter-2009',
		limbs: ['right.leg'],
		bases: { 'right.leg': { kind: 'fixed', orientation: 'thigh-on-seat' } },
		loads: [{ limb: 'right.leg', segment: 'shank', massKg: load.m, pointM: [0, load.y, 0] }]
	});

	it('at q = 0 the thigh and shank lie horizontal and anterior: knee and hip moments are Σ m g x by hand', () => {
		// knee extended, ankle 0: the foot (along the shank frame's +X) points straight up, its COM above the ankle
		const r = runPipeline(
			built,
			makeRecording(built, 40, 100, () => 0),
			{ cutoffHz: null }
		);
		const knee = -G * (sh.m * sh.d + load.m * -load.y + ft.m * sh.L); // extensor: negative on the flexion axis
		const hip = G * (t.m * t.d + sh.m * (t.L + sh.d) + load.m * (t.L - load.y) + ft.m * (t.L + sh.L));
		expect(momentOf(r, 'right.knee.flexion')[10]).toBeCloseTo(knee, 9);
		expect(momentOf(r, 'right.hip.flexion')[10]).toBeCloseTo(hip, 9);
		expect(Math.abs(momentOf(r, 'right.ankle.dorsiflexion')[10])).toBeLessThan(1e-9);
	});

	it('knee flexed 90° (shank hanging, foot flat): only the foot, anterior of the shank, loads the knee', () => {
		const r = runPipeline(
			built,
			makeRecording(built, 40, 100, (n) => (n === 'right.knee.flexion' ? 90 * deg : 0)),
			{ cutoffHz: null }
		);
		// foot COM d_foot anterior of the ankle, which hangs straight below the knee: an extensor moment m g d
		expect(momentOf(r, 'right.knee.flexion')[10]).toBeCloseTo(-G * ft.m * ft.d, 9);
	});

	it('is refused for an arm', () => {
		expect(
			sessionSetupProblems({
				table: 'de-leva-1996',
				limbs: ['right.arm'],
				bases: { 'right.arm': { kind: 'fixed', orientation: 'thigh-on-seat' } }
			})
		).toEqual(['bases.right.arm.orientation: "thigh-on-seat" applies to a leg, not to right.arm']);
	});
});

describe('moving base (prescribed px, py, pz, rx, ry, rz)', () => {
	const arm = { table: 'de-leva-1996' as const, limbs: ['right.arm' as const] };
	const moving = buildSessionModel(person, { ...arm, bases: { 'right.arm': { kind: 'moving' } } });
	const fixed = buildSessionModel(person, arm);
	const root = fixed.model.bodies[0].anchor;
	const motion = (name: string, t: number) =>
		name.endsWith('shoulder.flexion')
			? 0.8 * Math.sin(2 * Math.PI * 0.7 * t) + 0.3
			: name.endsWith('elbow.flexion')
				? 1 + 0.5 * Math.sin(2 * Math.PI * 1.1 * t)
				: 0.1 * Math.cos(2 * Math.PI * 0.5 * t);

	it('expects the six base columns first, positions in m and rotations as angles; the schema accepts the massless chain', () => {
		expect(moving.expected.slice(0, 6)).toEqual([
			{ name: 'right.arm.base.px', kind: 'position' },
			{ name: 'right.arm.base.py', kind: 'position' },
			{ name: 'right.arm.base.pz', kind: 'position' },
			{ name: 'right.arm.base.rx', kind: 'angle' },
			{ name: 'right.arm.base.ry', kind: 'angle' },
			{ name: 'right.arm.base.rz', kind: 'angle' }
		]);
		expect(moving.expected.length).toBe(13);
		expect(modelProblems(moving.model)).toEqual([]);
		expect(moving.dofs.filter((d) => d.base).map((d) => d.joint)).toEqual(Array(6).fill('base'));
	});

	it('with constant base columns gives the same moments as a fixed base (upright, and turned like a custom base)', () => {
		const angles = [10, -20, 35];
		const custom = buildSessionModel(person, {
			...arm,
			bases: {
				'right.arm': { kind: 'fixed', orientation: 'custom', cardanXYZDeg: angles as [number, number, number], positionM: [0.1, 1.2, 0.3] }
			}
		});
		for (const [ref, base] of [
			[fixed, [root[0], root[1], root[2], 0, 0, 0]],
			[custom, [0.1, 1.2, 0.3, ...angles.map((a) => a * deg)]]
		] as const) {
			const baseValue = (name: string) => base[['px', 'py', 'pz', 'rx', 'ry', 'rz'].indexOf(name.split('.').pop()!)];
			const rm = runPipeline(
				moving,
				makeRecording(moving, 300, 100, (n, t) => (n.includes('.base.') ? baseValue(n) : motion(n, t))),
				{ cutoffHz: 8 }
			);
			const rf = runPipeline(ref, makeRecording(ref, 300, 100, motion), { cutoffHz: 8 });
			expect(rm.dofs.map((d) => d.name)).toEqual(rf.dofs.map((d) => d.name));
			expect(rm.base.map((b) => b.name)).toEqual(moving.expected.slice(0, 6).map((e) => e.name));
			for (let j = 0; j < rf.dofs.length; j++)
				for (let k = 0; k < 300; k++) expect(rm.dofs[j].moment[k]).toBeCloseTo(rf.dofs[j].moment[k], 9);
			for (let k = 0; k < 900; k++) expect(rm.reactions[0].force[k]).toBeCloseTo(rf.reactions[0].force[k], 9);
		}
	});

	it('accelerating upward at a = g doubles every static moment (equivalence of gravity and base acceleration)', () => {
		const pose = (n: string) =>
			n.endsWith('shoulder.flexion') ? 70 * deg : n.endsWith('elbow.flexion') ? 40 * deg : n.endsWith('abduction') ? 15 * deg : 0;
		// py = y0 + ½ g t²: its second differences are exactly g, also at the ends — with the `cubic` end treatment,
		// whose continuation without a filter is the cubic through the last four samples (exact for a quadratic)
		const rm = runPipeline(
			moving,
			makeRecording(moving, 60, 100, (n, t) =>
				n.endsWith('base.py')
					? root[1] + 0.5 * G * t * t
					: n.endsWith('base.px')
						? root[0]
						: n.endsWith('base.pz')
							? root[2]
							: n.includes('.base.')
								? 0
								: pose(n)
			),
			{ cutoffHz: null, endTreatment: 'cubic' }
		);
		const rf = runPipeline(fixed, makeRecording(fixed, 60, 100, pose), { cutoffHz: null, endTreatment: 'cubic' });
		expect(Math.abs(rf.dofs[0].moment[0])).toBeGreaterThan(1);
		for (let j = 0; j < rf.dofs.length; j++)
			for (let k = 0; k < 60; k += 7) expect(rm.dofs[j].moment[k]).toBeCloseTo(2 * rf.dofs[j].moment[k], 8);
	});
});

describe('set-up validation', () => {
	it('names the field of every problem', () => {
		expect(sessionSetupProblems({ table: 'nope', limbs: [] })[0]).toMatch(/^table: table must be one of/);
		expect(
			sessionSetupProblems({
				table: 'de-leva-1996',
				limbs: ['right.arm'],
				loads: [{ limb: 'right.arm', segment: 'shank', massKg: 1, pointM: [0, 0, 0] }]
			})
		).toEqual(['loads.0.segment: right.arm has no shank: choose hand or forearm']);
		expect(
			sessionSetupProblems({
				table: 'de-leva-1996',
				limbs: ['right.arm'],
				bases: { 'right.arm': { kind: 'fixed', orientation: 'custom' } }
			})[0]
		).toMatch(/cardanXYZDeg/);
		expect(() =>
			buildSessionModel(person, { table: 'de-leva-1996', limbs: ['right.arm'], bases: { 'left.leg': { kind: 'moving' } } })
		).toThrow(SessionModelError);
	});

	it('Cardan X-Y-Z is Rx·Ry·Rz (a 90° X turn then a 90° Y turn sends body Z to lab X)', () => {
		const R = cardanXYZ(Math.PI / 2, Math.PI / 2, 0);
		// Rx(90)·Ry(90)·e_z = Rx(90)·e_x = e_x
		[1, 0, 0].forEach((v, r) => expect(R[r][2]).toBeCloseTo(v, 12));
		// and body Y to lab Z: Rx(90)·Ry(90)·e_y = Rx(90)·e_y = e_z
		[0, 0, 1].forEach((v, r) => expect(R[r][1]).toBeCloseTo(v, 12));
	});
});
