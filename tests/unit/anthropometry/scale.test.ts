// Scaled segment parameters against hand calculations from the published tables, and through the engine.
import { describe, expect, it } from 'vitest';
import { scaleLimbs, compareTables, participantProblems, ScalingError, tables, type ParticipantBody } from '../../../src/lib/anthropometry';
import { compileModel, inverseDynamics, massMatrix, choleskyInPlace } from '../../../src/lib/dynamics';

// Reference participant for the worked examples: 80 kg, 1.80 m.
const ref: ParticipantBody = { sex: 'male', bodyMass: 80, stature: 1.8 };
const seg = (m: ReturnType<typeof scaleLimbs>, key: string) => m.segments.find((s) => s.key === key)!;
const near = (a: number, b: number, digits: number) => expect(a).toBeCloseTo(b, digits);
/** One segment's scaled values against a hand calculation; `digits` per field where the hand value is rounded. */
type Hand = Partial<Record<'length' | 'mass' | 'com' | 'flexion' | 'longitudinal', number | [number, number]>>;
function expectByHand(m: ReturnType<typeof scaleLimbs>, key: string, hand: Hand): void {
	const s = seg(m, key);
	const got = {
		length: s.length.value,
		mass: s.mass.value,
		com: s.comDistance.value,
		flexion: s.inertia.flexion.value,
		longitudinal: s.inertia.longitudinal.value
	};
	for (const [field, want] of Object.entries(hand) as [keyof Hand, number | [number, number]][]) {
		const [value, digits] = Array.isArray(want) ? want : [want, 6];
		near(got[field], value, digits);
	}
}

describe('worked examples by hand (80 kg, 1.80 m)', () => {
	it('Dempster via Winter 2009 Table 4.1, lengths from Drillis & Contini (Winter 2009 Fig. 4.1)', () => {
		const m = scaleLimbs(ref, 'dempster-winter-2009', ['right.leg']);
		// Hand calculation (values of Table 4.1 and Fig. 4.1, from memory):
		// thigh: L = 0.245 × 1.80 = 0.441 m; m = 0.100 × 80 = 8.000 kg; COM 0.433 × 0.441 = 0.190953 m;
		//        I = 8.000 × (0.323 × 0.441)² = 0.162320 kg·m²
		// shank: L = 0.246 × 1.80 = 0.4428 m; m = 0.0465 × 80 = 3.720 kg; COM 0.433 × 0.4428 = 0.191732 m;
		//        I = 3.720 × (0.302 × 0.4428)² = 0.066523 kg·m²
		// foot:  L = 0.152 × 1.80 = 0.2736 m; m = 0.0145 × 80 = 1.160 kg; COM 0.50 × 0.2736 = 0.1368 m;
		//        I = 1.160 × (0.475 × 0.2736)² = 0.019592 kg·m²
		expectByHand(m, 'right.thigh', { length: 0.441, mass: 8.0, com: 0.190953, flexion: 0.16232 });
		expectByHand(m, 'right.shank', { length: 0.4428, mass: 3.72, com: 0.191732, flexion: 0.066523 });
		expectByHand(m, 'right.foot', { mass: 1.16, com: 0.1368, flexion: 0.019592 });
		const thigh = seg(m, 'right.thigh');
		expect(thigh.length.kind).toBe('estimated');
		expect(thigh.mass.source).toContain('Table 4.1');
	});

	it('de Leva 1996 Table 4 (male), lengths scaled from the sample means by stature', () => {
		const m = scaleLimbs(ref, 'de-leva-1996', ['right.leg']);
		// Hand calculation (de Leva Table 4, male, from memory): stature ratio 1.80 / 1.741
		// thigh: L = 0.4222 × 1.80 / 1.741 = 0.436508 m; m = 0.1416 × 80 = 11.328 kg;
		//        COM 0.4095 × L = 0.178750 m; I_flex = 11.328 × (0.329 L)² = 0.233630 kg·m²; I_long = 11.328 × (0.149 L)² = 0.047919
		// shank (the row from the knee joint centre to the ankle joint centre, KJC–AJC; its mean length 440.3 mm is
		//        derived from the KJC–LMAL row, as the table file says):
		//        L = 0.4403 × 1.80 / 1.741 = 0.455221 m; m = 0.0433 × 80 = 3.464 kg;
		//        COM 0.4395 × L = 0.200070 m; I_flex = 3.464 × (0.246 L)² = 0.043440 kg·m²
		// foot:  L = 0.2581 × 1.80 / 1.741 = 0.266847 m; m = 0.0137 × 80 = 1.096 kg;
		//        COM 0.4415 × L = 0.117813 m; I_flex = 1.096 × (0.245 L)² = 0.004685 kg·m²
		expectByHand(m, 'right.thigh', { length: 0.436508, mass: 11.328, com: [0.17875, 5], flexion: 0.23363, longitudinal: 0.047919 });
		expectByHand(m, 'right.shank', { length: 0.455221, mass: 3.464, com: [0.20007, 5], flexion: 0.04344 });
		expectByHand(m, 'right.foot', { length: 0.266847, mass: 1.096, com: [0.117813, 5], flexion: 0.004685 });
		expect(m.sexUsed).toEqual({ value: 'male', reason: 'participant reported male' });
	});

	it('de Leva 1996 Table 4 (female) thigh: m = 0.1478 × 61.9 kg for the sample’s mean woman', () => {
		const m = scaleLimbs({ sex: 'female', bodyMass: 61.9, stature: 1.735 }, 'de-leva-1996', ['left.leg']);
		const thigh = seg(m, 'left.thigh');
		near(thigh.mass.value, 0.1478 * 61.9, 9);
		near(thigh.length.value, 0.3685, 9); // at the sample's mean stature the mean length comes back
		near(thigh.comDistance.value, 0.3612 * 0.3685, 9);
	});
});

describe('regression table', () => {
	it('at its sample’s mean subject gives the sample’s mean segment masses (a least-squares fit passes through the means)', () => {
		// Reference: the mean subject of the Zatsiorsky–Seluyanov sample (73.0 kg, 174.1 cm; from memory) and the
		// sample's mean mass fractions as printed by de Leva 1996 Table 4 (male; from memory). The published
		// standard errors were not recalled (the table file records null), so the tolerance is 1 % of the mean
		// mass or 0.01 kg, whichever is larger — Momentry's choice, not the published SE.
		const subject = tables.zatsiorsky.referenceSubject;
		const m = scaleLimbs({ sex: 'male', bodyMass: subject.bodyMass.value, stature: subject.stature.value }, 'zatsiorsky-regression-2002', [
			'right.leg',
			'right.arm'
		]);
		for (const s of m.segments) {
			const meanMass = tables.deLeva.segments[s.segment].male!.massFraction.value * subject.bodyMass.value;
			expect(Math.abs(s.mass.value - meanMass)).toBeLessThanOrEqual(Math.max(0.01 * meanMass, 0.01));
		}
	});

	it('is refused for women, with the reason', () => {
		expect(() => scaleLimbs({ sex: 'female', bodyMass: 60, stature: 1.65 }, 'zatsiorsky-regression-2002', ['right.leg'])).toThrow(
			/fitted on men only/
		);
	});
});

describe('stature proportions (Drillis & Contini, Winter 2009 Fig. 4.1)', () => {
	it('unmeasured lengths are the printed fractions times stature', () => {
		const m = scaleLimbs({ sex: 'female', bodyMass: 60, stature: 1.62 }, 'dempster-winter-2009', ['left.arm', 'left.leg']);
		const expected: Record<string, number> = { upperarm: 0.186, forearm: 0.146, hand: 0.108, thigh: 0.245, shank: 0.246, foot: 0.152 };
		for (const s of m.segments) near(s.length.value, expected[s.segment] * 1.62, 12);
	});

	it('measured lengths win and are recorded as measured', () => {
		const m = scaleLimbs({ ...ref, measuredLengths: { 'right.thigh': 0.45, 'right.shank': 0.43 } }, 'de-leva-1996', ['right.leg']);
		expect(seg(m, 'right.thigh').length).toMatchObject({ value: 0.45, kind: 'measured' });
		expect(seg(m, 'right.shank').length).toMatchObject({ value: 0.43, kind: 'measured' });
		expect(seg(m, 'right.foot').length.kind).toBe('estimated');
		const knee = m.model.bodies.find((b) => b.name === 'right.shank')!;
		expect(knee.anchor).toEqual([0, -0.45, 0]);
	});
});

describe('scaled trees through the engine', () => {
	it('a leg held still and horizontal needs the hip moment of hand statics, Σ m·g·lever arm', () => {
		const m = scaleLimbs(ref, 'de-leva-1996', ['right.leg']);
		const model = compileModel(m.model);
		const q = new Float64Array(model.n);
		q[m.dofs.findIndex((d) => d.name === 'right.hip.flexion')] = Math.PI / 2; // thigh and shank forward, horizontal
		const g = 9.81;
		const { Q } = inverseDynamics(model, q, new Float64Array(model.n), new Float64Array(model.n), { gravity: [0, -g, 0] });
		const [t, s, f] = ['right.thigh', 'right.shank', 'right.foot'].map((k) => seg(m, k));
		// foot turns upright with the leg, so its COM lies above the ankle, at the lever L_thigh + L_shank
		const hand =
			g *
			(t.mass.value * t.comDistance.value +
				s.mass.value * (t.length.value + s.comDistance.value) +
				f.mass.value * (t.length.value + s.length.value));
		near(Q[m.dofs.findIndex((d) => d.name === 'right.hip.flexion')], hand, 9);
		// and the knee carries the shank and foot: g (m_s d_s + m_f L_s)
		near(
			Q[m.dofs.findIndex((d) => d.name === 'right.knee.flexion')],
			-g * (s.mass.value * s.comDistance.value + f.mass.value * s.length.value),
			9
		);
	});

	it('gives a valid model with a positive-definite mass matrix for all four limbs', () => {
		const m = scaleLimbs(ref, 'dempster-winter-2009', ['right.arm', 'left.arm', 'right.leg', 'left.leg']);
		const model = compileModel(m.model);
		expect(model.n).toBe(26);
		expect(m.dofs.map((d) => d.name)).toContain('left.wrist.ulnarDeviation');
		const M = massMatrix(model, new Float64Array(26).fill(0.3));
		expect(() => choleskyInPlace(M, 26)).not.toThrow();
	});

	it('mirrors left and right: the same anatomical motion needs the same joint moments on both sides', () => {
		const right = compileModel(scaleLimbs(ref, 'de-leva-1996', ['right.arm']).model);
		const left = compileModel(scaleLimbs(ref, 'de-leva-1996', ['left.arm']).model);
		const q = [0.4, 0.3, 0.2, 0.9, 0.5, 0.2, 0.1],
			qd = [1, -0.5, 0.3, 2, -1, 0.4, 0.2],
			qdd = [3, 1, -2, 4, 2, -1, 1];
		const a = inverseDynamics(right, q, qd, qdd, { gravity: [0, -9.81, 0] }).Q;
		const b = inverseDynamics(left, q, qd, qdd, { gravity: [0, -9.81, 0] }).Q;
		for (let i = 0; i < 7; i++) near(a[i], b[i], 12);
	});
});

describe('comparison of tables', () => {
	it('lists every table side by side, and says why one cannot serve', () => {
		const rows = compareTables({ sex: 'female', bodyMass: 64, stature: 1.68 }, ['right.leg']);
		expect(rows.map((r) => r.key)).toEqual(['right.thigh', 'right.shank', 'right.foot']);
		const thigh = rows[0];
		expect(thigh.byTable['dempster-winter-2009']).toMatchObject({ mass: 6.4 });
		expect(thigh.byTable['de-leva-1996']).toMatchObject({ mass: 0.1478 * 64 });
		expect(thigh.byTable['zatsiorsky-regression-2002']).toEqual({ unavailable: expect.stringMatching(/men only/) });
		near(thigh.spread.mass, (0.1478 * 64 - 6.4) / ((0.1478 * 64 + 6.4) / 2), 12);
	});
});

describe('validation', () => {
	it('body mass outside 20–300 kg', () => {
		expect(participantProblems({ ...ref, bodyMass: 12 })).toEqual(['body mass must be between 20 and 300 kg (got 12 kg)']);
		expect(participantProblems({ ...ref, bodyMass: 301 })).toEqual(['body mass must be between 20 and 300 kg (got 301 kg)']);
	});
	it('stature outside 0.8–2.5 m', () => {
		expect(participantProblems({ ...ref, stature: 180 })).toEqual(['stature must be between 0.8 and 2.5 m (got 180 m)']);
	});
	it('non-positive measured length', () => {
		expect(participantProblems({ ...ref, measuredLengths: { 'left.forearm': -0.2 } })).toEqual([
			'measured length of left.forearm must be a positive number of metres (got -0.2)'
		]);
	});
	it('implausible measured length for the stature', () => {
		expect(participantProblems({ ...ref, measuredLengths: { 'right.thigh': 44 } })[0]).toMatch(
			/^measured length of right\.thigh \(44 m\) is not plausible for a stature of 1\.8 m: expected 0\.221–0\.706 m \(is it in metres\?\)$/
		);
	});
	it('unknown segment key', () => {
		expect(participantProblems({ ...ref, measuredLengths: { 'right.tibia': 0.4 } })[0]).toMatch(/unknown segment/);
	});
	it('sex missing, and sex not reported without a stated rule for a sex-dependent table', () => {
		expect(participantProblems({ bodyMass: 70, stature: 1.7 })).toEqual(['sex must be "female", "male" or "not reported"']);
		const p: ParticipantBody = { sex: 'not reported', bodyMass: 70, stature: 1.7 };
		expect(() => scaleLimbs(p, 'de-leva-1996', ['right.leg'])).toThrow(/choose how to treat it/);
		const m = scaleLimbs({ ...p, notReportedAs: 'mean' }, 'de-leva-1996', ['right.leg']);
		expect(m.sexUsed.value).toBe('mean');
		near(seg(m, 'right.thigh').mass.value, ((0.1416 + 0.1478) / 2) * 70, 12);
		expect(scaleLimbs(p, 'dempster-winter-2009', ['right.leg']).sexUsed.value).toBe('any');
	});
	it('unknown or repeated limbs, and an unknown table', () => {
		expect(() => scaleLimbs(ref, 'de-leva-1996', [])).toThrow('choose at least one limb');
		expect(() => scaleLimbs(ref, 'de-leva-1996', ['right.leg', 'right.leg'])).toThrow('each limb may be listed once');
		expect(() => scaleLimbs(ref, 'nope' as never, ['right.leg'])).toThrow(/unknown table "nope"/);
		try {
			scaleLimbs({ ...ref, bodyMass: 5 }, 'de-leva-1996', ['right.tail' as never]);
		} catch (e) {
			expect(e).toBeInstanceOf(ScalingError);
			expect((e as ScalingError).problems).toHaveLength(2);
		}
	});
});
