// Loads on the person from a plate's signals, checked against hand-worked examples (written out below from the
// statics identity M_O = r × F + T: the moment of a force about a point plus a free couple — any statics text),
// a second plate rotated 90° about lab Y and offset, static equilibrium of the plate, and round trips.
import { describe, expect, it } from 'vitest';
import {
	copToMoments,
	DEFAULT_CONTACT_THRESHOLD_N,
	ForceError,
	labToPlate,
	loadedMask,
	plateCentre,
	plateToLab,
	type ForcePlate,
	type Mat3,
	type Vec3
} from '../../../../src/lib/processing/forces';
import { seededUniform } from '../../../../src/lib/processing/edges';
import { plate1, plate2 } from './plates';

const v = (...xs: number[]) => Float64Array.from(xs);
const close = (got: ArrayLike<number>, want: ArrayLike<number>, tol = 1e-12) => {
	expect(got.length).toBe(want.length);
	for (let i = 0; i < want.length; i++) expect(Math.abs(got[i] - want[i])).toBeLessThan(tol);
};

describe('CoP and free moment: hand-worked example with surface depth (plate axes → lab)', () => {
	// Measured on plate1 (plate axes, the load applied TO the plate): F = (40, −20, 800) N, M = (60, −100, 5) N·m about
	// the measuring origin 0.04 m below the surface centre. The CoP r = (x, y, −d) satisfies M = r × F + (0, 0, T):
	//   Mx = y·Fz + d·Fy  →  y = (Mx − d·Fy) / Fz = (60 − 0.04·(−20)) / 800 = 60.8 / 800 = 0.076 m
	//   My = −d·Fx − x·Fz →  x = (−My − d·Fx) / Fz = (100 − 0.04·40) / 800 = 98.4 / 800 = 0.123 m
	//   Mz = x·Fy − y·Fx + T →  T = 5 − 0.123·(−20) + 0.076·40 = 5 + 2.46 + 3.04 = 10.5 N·m
	// In the lab (R columns: x = (1,0,0), y = (0,0,1), z = (0,−1,0)):
	//   GRF on the person = −R·F = −(40, −800, −20) = (−40, 800, 20) N
	//   origin = centre + d·z = (1, −0.04, 0.5); CoP = origin + R·(0.123, 0.076, −0.04) = (1, −0.04, 0.5) + (0.123, 0.04, 0.076)
	//          = (1.123, 0, 0.576) m (on the surface, Y = 0)
	//   free moment on the person = −T·z = −10.5·(0, −1, 0) = (0, 10.5, 0) N·m
	const F = v(40, -20, 800),
		M = v(60, -100, 5);

	it('forces-moments plate', () => {
		const r = plateToLab(plate1, { force: F, moment: M });
		close(r.grf, [-40, 800, 20]);
		close(r.cop, [1.123, 0, 0.576]);
		close(r.freeMoment, [0, 10.5, 0]);
		expect([...r.loaded]).toEqual([1]);
	});

	it('forces-cop plate giving the same load directly: CoP (0.123, 0.076, −0.04) m, free moment 10.5 N·m', () => {
		const r = plateToLab({ ...plate1, output: 'forces-cop' }, { force: F, cop: v(0.123, 0.076, -0.04), freeMoment: v(10.5) });
		close(r.grf, [-40, 800, 20]);
		close(r.cop, [1.123, 0, 0.576]);
		close(r.freeMoment, [0, 10.5, 0]);
		// and the moments equivalent to that CoP are the measured ones
		close(copToMoments(plate1, { force: F, cop: v(0.123, 0.076, 0), freeMoment: v(10.5) }), M);
	});

	it('the plate is in equilibrium: the person’s load on it, taken about its origin, is R·M (independent of the CoP formulas)', () => {
		// (CoP − O) × (−GRF) + (−free moment) = (0.123, 0.04, 0.076) × (40, −800, −20) − (0, 10.5, 0)
		//   = (0.04·(−20) − 0.076·(−800), 0.076·40 − 0.123·(−20), 0.123·(−800) − 0.04·40) − (0, 10.5, 0)
		//   = (60, 5.5, −100) − (0, 10.5, 0) = (60, −5, −100);   R·M = (Mx, −Mz, My) = (60, −5, −100)
		const r = plateToLab(plate1, { force: F, moment: M });
		const o: Vec3 = [1, -0.04, 0.5];
		const p = [r.cop[0] - o[0], r.cop[1] - o[1], r.cop[2] - o[2]];
		const f = [-r.grf[0], -r.grf[1], -r.grf[2]];
		const m = [
			p[1] * f[2] - p[2] * f[1] - r.freeMoment[0],
			p[2] * f[0] - p[0] * f[2] - r.freeMoment[1],
			p[0] * f[1] - p[1] * f[0] - r.freeMoment[2]
		];
		close(m, [60, -5, -100], 1e-10);
	});
});

describe('a plate rotated 90° about lab Y and offset gives the physical load', () => {
	// The physical load: GRF (−40, 800, 20) N at CoP (2.55, 0, −1.3) m, free moment (0, 10.5, 0) N·m on the person.
	// plate2 measures F = −Rᵀ·GRF = −(x·G, y·G, z·G) = −(−20, −40, −800) = (20, 40, 800) N.
	// origin = (2.5, −0.05, −1.2); r = CoP − origin = (0.05, 0.05, −0.1) lab → plate (x·r, y·r, z·r) = (0.1, 0.05, −0.05).
	// T on the plate about z = −(z · (0, 10.5, 0)) = 10.5 N·m. M = r × F + (0, 0, T):
	//   Mx = 0.05·800 − (−0.05)·40 = 42;  My = (−0.05)·20 − 0.1·800 = −81;  Mz = 0.1·40 − 0.05·20 + 10.5 = 13.5
	it('from F = (20, 40, 800) N, M = (42, −81, 13.5) N·m', () => {
		const r = plateToLab(plate2, { force: v(20, 40, 800), moment: v(42, -81, 13.5) });
		close(r.grf, [-40, 800, 20]);
		close(r.cop, [2.55, 0, -1.3]);
		close(r.freeMoment, [0, 10.5, 0]);
	});

	it('and labToPlate writes exactly those signals', () => {
		const s = labToPlate(plate2, { grf: v(-40, 800, 20), cop: v(2.55, 0, -1.3), freeMoment: v(0, 10.5, 0) });
		close(s.force, [20, 40, 800]);
		close(s.moment as Float64Array, [42, -81, 13.5], 1e-12);
		const c = labToPlate(plate2, { grf: v(-40, 800, 20), cop: v(2.55, 0, -1.3), freeMoment: v(0, 10.5, 0) }, 'forces-cop');
		close(c.cop as Float64Array, [0.1, 0.05, -0.05]);
		close(c.freeMoment as Float64Array, [10.5]);
	});
});

describe('contact threshold (default 20 N, common practice)', () => {
	it('CoP NaN and free moment 0 below 20 N of normal force; defined at 20 N', () => {
		const r = plateToLab(plate1, { force: v(5, 0, 19.999, 5, 0, 20), moment: v(1, 1, 1, 1, 1, 1) });
		expect(DEFAULT_CONTACT_THRESHOLD_N).toBe(20);
		expect([...r.loaded]).toEqual([0, 1]);
		expect(r.cop.slice(0, 3).every(Number.isNaN)).toBe(true);
		expect([...r.freeMoment.slice(0, 3)]).toEqual([0, 0, 0]);
		close(r.grf.slice(0, 3), [-5, 19.999, 0]); // the GRF is still given
		expect(r.cop.slice(3).every(Number.isFinite)).toBe(true);
		expect([...plateToLab(plate1, { force: v(0, 0, 30), moment: v(0, 0, 0) }).loaded]).toEqual([1]);
		expect([...plateToLab(plate1, { force: v(0, 0, 30), moment: v(0, 0, 0) }, { thresholdN: 50 }).loaded]).toEqual([0]);
	});

	it('loadedMask: |component along the normal (default lab Y)| ≥ threshold', () => {
		expect([...loadedMask(v(0, 19, 0, 0, -20, 0, 100, 5, 0))]).toEqual([0, 1, 0]);
		expect([...loadedMask(v(0, 19, 0, 0, -20, 0, 100, 5, 0), 10, [1, 0, 0])]).toEqual([0, 0, 1]);
	});
});

describe('round trip labToPlate → plateToLab (seeded random loads)', () => {
	// an inclined plate: plate1 tilted 10° about its own x axis, moved, d = 0.035 m
	const a = (10 * Math.PI) / 180;
	const tilted: ForcePlate = (() => {
		const x: Vec3 = [1, 0, 0];
		const z: Vec3 = [0, -Math.cos(a), -Math.sin(a)];
		const y: Vec3 = [z[1] * x[2] - z[2] * x[1], z[2] * x[0] - z[0] * x[2], z[0] * x[1] - z[1] * x[0]];
		const axes = [0, 1, 2].map((i) => [x[i], y[i], z[i]]) as Mat3;
		const c: Vec3 = [0.2, 0.1, -0.3];
		const corner = (s: number, t: number): Vec3 => [c[0] + s * x[0] + t * y[0], c[1] + s * x[1] + t * y[1], c[2] + s * x[2] + t * y[2]];
		return {
			name: 'ramp',
			corners: [corner(-0.3, -0.2), corner(0.3, -0.2), corner(0.3, 0.2), corner(-0.3, 0.2)],
			axes,
			originDepthM: 0.035,
			output: 'forces-moments'
		};
	})();

	for (const plate of [plate1, plate2, tilted]) {
		for (const output of ['forces-moments', 'forces-cop'] as const) {
			it(`${plate.name}, ${output}`, () => {
				const rnd = seededUniform(7);
				const n = 200;
				const grf = new Float64Array(3 * n),
					cop = new Float64Array(3 * n),
					fm = new Float64Array(3 * n);
				const x = plate.axes.map((r) => r[0]),
					y = plate.axes.map((r) => r[1]),
					z = plate.axes.map((r) => r[2]);
				const c = plateCentre(plate);
				for (let i = 0; i < n; i++) {
					const fx = 200 * (rnd() - 0.5),
						fy = 200 * (rnd() - 0.5),
						fz = -(30 + 1500 * rnd()); // the person is pushed out of the plate: −z
					const s = 0.5 * (rnd() - 0.5),
						t = 0.3 * (rnd() - 0.5),
						tau = 20 * (rnd() - 0.5);
					for (let k = 0; k < 3; k++) {
						grf[3 * i + k] = fx * x[k] + fy * y[k] + fz * z[k];
						cop[3 * i + k] = c[k] + s * x[k] + t * y[k];
						fm[3 * i + k] = tau * z[k];
					}
				}
				const signals = labToPlate(plate, { grf, cop, freeMoment: fm }, output);
				const back = plateToLab({ ...plate, output }, signals);
				close(back.grf, grf, 1e-9);
				close(back.cop, cop, 1e-12);
				close(back.freeMoment, fm, 1e-9);
			});
		}
	}
});

describe('bad input', () => {
	it('refuses missing channels and mismatched lengths with a message', () => {
		expect(() => plateToLab(plate1, { force: v(0, 0, 1) })).toThrow(/no moment/);
		expect(() => plateToLab(plate1, { force: v(0, 0, 1, 0, 0, 2), moment: v(0, 0, 1) })).toThrow(/moment has 1 samples; the force has 2/);
		expect(() => plateToLab({ ...plate1, output: 'forces-cop' }, { force: v(0, 0, 1), cop: v(0, 0, 0) })).toThrow(ForceError);
		expect(() => plateToLab(plate1, { force: v(0, 0, 1), moment: v(0, 0, 0) }, { thresholdN: -1 })).toThrow(/threshold/);
		expect(() => copToMoments(plate1, { force: v(0, 0, 5, 0, 0, 500), cop: v(NaN, NaN, NaN, NaN, 0, 0), freeMoment: v(0, 0) })).toThrow(
			/plate1: sample 2 of 2 has no centre of pressure/
		);
	});
});
