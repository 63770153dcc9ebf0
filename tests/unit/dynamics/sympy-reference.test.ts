// Against a general-purpose reference: sympy.physics.mechanics (Kane's method) on a 3-D six-body branched tree.
// tests/reference/sympy_chain.py derives M, c and Q; the fixture is regenerated when python3 with sympy is present.
import { describe, expect, it } from 'vitest';
import {
	compileModel,
	inverseDynamics,
	massMatrix,
	bias,
	forwardKinematics,
	energy,
	type ExternalLoad,
	type Vec3
} from '../../../src/lib/dynamics';
import { loadSympyReference, relErr, type SympyModelFixture } from '../../reference/fixture';

interface Fixture extends SympyModelFixture {
	externalLoads: ExternalLoad[];
	states: {
		q: number[];
		qd: number[];
		qdd: number[];
		M: number[][];
		c: number[];
		Q: number[];
		comWorld: Vec3[];
		kineticEnergy: number;
		potentialEnergy: number;
	}[];
}

const committed = 'tests/fixtures/dynamics/sympy-chain.json';

const { fixture, regenerated } = loadSympyReference<Fixture>('tests/reference/sympy_chain.py', committed);
const model = compileModel(fixture.model);
const n = model.n;
const opts = { gravity: fixture.gravity, loads: fixture.externalLoads };

describe(`sympy reference (${regenerated ? 'regenerated now' : 'committed fixture'}: ${fixture.source})`, () => {
	it('covers a branched 3-D tree with both joint types', () => {
		expect(n).toBeGreaterThanOrEqual(5);
		expect(new Set(Array.from(model.parent)).size).toBeLessThan(n); // some body has two children
		expect(Array.from(model.kind)).toContain(1);
		expect(fixture.states.length).toBeGreaterThanOrEqual(5);
	});

	fixture.states.forEach((s, k) => {
		it(`state ${k}: M, c, Q, centres of mass and energy match to 1e-9 relative`, () => {
			expect(relErr(massMatrix(model, s.q), s.M.flat())).toBeLessThan(1e-9);
			expect(relErr(bias(model, s.q, s.qd, opts), s.c)).toBeLessThan(1e-9);
			expect(relErr(inverseDynamics(model, s.q, s.qd, s.qdd, opts).Q, s.Q)).toBeLessThan(1e-9);
			expect(relErr(forwardKinematics(model, s.q).com, s.comWorld.flat())).toBeLessThan(1e-9);
			const e = energy(model, s.q, s.qd, opts);
			expect(Math.abs(e.kinetic - s.kineticEnergy) / Math.abs(s.kineticEnergy)).toBeLessThan(1e-9);
			expect(Math.abs(e.potential - s.potentialEnergy) / Math.abs(s.potentialEnergy)).toBeLessThan(1e-9);
		});
	});
});
