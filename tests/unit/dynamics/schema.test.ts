// The model schema rejects every malformed model with a message naming the body and the field.
import { describe, expect, it } from 'vitest';
import { compileModel, modelProblems, ModelError, type Mat3, type ModelInput } from '../../../src/lib/dynamics';
import { body, diag, branchedChain } from './fixtures';

const base = (): ModelInput => ({
	bodies: [body({ name: 'upper', parent: -1, mass: 2 }), body({ name: 'lower', parent: 0, anchor: [0, -0.3, 0], mass: 1 })]
});
function problemsWith(edit: (m: ModelInput) => void): string[] {
	const m = base();
	edit(m);
	return modelProblems(m);
}
const problemsWithLowerInertia = (inertia: Mat3) => problemsWith((m) => (m.bodies[1].inertia = inertia));

describe('model schema', () => {
	it('accepts a valid model', () => {
		expect(modelProblems(branchedChain())).toEqual([]);
		expect(compileModel(base()).n).toBe(2);
	});

	it('rejects a parent that is not an earlier body', () => {
		expect(problemsWith((m) => (m.bodies[1].parent = 1))).toEqual([
			'body 1 "lower": parent: parent 1 must be −1 (the ground) or the index of an earlier body (0…0)'
		]);
		expect(problemsWith((m) => (m.bodies[0].parent = -2))[0]).toMatch(/^body 0 "upper": parent: parent -2 must be −1/);
	});

	it('rejects a zero axis', () => {
		expect(problemsWith((m) => (m.bodies[1].joint.axis = [0, 0, 0]))).toEqual(['body 1 "lower": joint.axis: must not be the zero vector']);
	});

	it('rejects a non-finite axis', () => {
		expect(problemsWith((m) => (m.bodies[0].joint.axis = [Infinity, 0, 1]))).toEqual([
			'body 0 "upper": joint.axis.0: must be a finite number'
		]);
	});

	it('rejects negative mass', () => {
		expect(problemsWith((m) => (m.bodies[0].mass = -1))).toEqual(['body 0 "upper": mass: must not be negative']);
	});

	it('rejects an asymmetric inertia tensor', () => {
		const p = problemsWithLowerInertia([
			[0.02, 0.001, 0],
			[0, 0.02, 0],
			[0, 0, 0.02]
		]);
		expect(p).toEqual(['body 1 "lower": inertia: must be symmetric (largest difference between I[r][c] and I[c][r] is 0.00100 kg·m²)']);
	});

	it('rejects an inertia tensor that is not positive semi-definite', () => {
		const p = problemsWithLowerInertia([
			[0.01, 0.02, 0],
			[0.02, 0.01, 0],
			[0, 0, 0.01]
		]);
		expect(p).toHaveLength(1);
		expect(p[0]).toMatch(/^body 1 "lower": inertia: must be positive semi-definite \(smallest principal moment -0\.01000 kg·m²\)$/);
	});

	it('rejects principal moments that break the triangle inequality', () => {
		const p = problemsWithLowerInertia(diag(0.01, 0.01, 0.05));
		expect(p).toEqual([
			'body 1 "lower": inertia: principal moments 0.01000, 0.01000, 0.05000 kg·m² break the triangle inequality (the largest must not exceed the sum of the other two)'
		]);
	});

	it('rejects a massless leaf body', () => {
		expect(problemsWith((m) => (m.bodies[1].mass = 0))).toEqual([
			'body 1 "lower": mass: is 0 on a leaf body: a massless body with nothing attached makes the mass matrix singular'
		]);
	});

	it('accepts massless bodies inside a chain (multi-DOF joints) but not a massless subtree', () => {
		expect(problemsWith((m) => (m.bodies[0].mass = 0))).toEqual([]);
		const p = problemsWith((m) => {
			m.bodies[0].mass = 0;
			m.bodies[1].mass = 0;
		});
		expect(p).toContain('body 0 "upper": mass: is 0 here and on every body attached below: the mass matrix would be singular');
	});

	it('rejects NaN anywhere', () => {
		expect(problemsWith((m) => (m.bodies[1].com = [0, NaN, 0]))).toEqual(['body 1 "lower": com.1: must be a finite number']);
		expect(problemsWith((m) => (m.bodies[0].anchor[2] = NaN))).toEqual(['body 0 "upper": anchor.2: must be a finite number']);
		expect(problemsWith((m) => (m.bodies[0].mass = NaN))).toEqual(['body 0 "upper": mass: must be a finite number']);
		expect(problemsWith((m) => (m.bodies[1].inertia[2][2] = NaN))).toEqual(['body 1 "lower": inertia.2.2: must be a finite number']);
	});

	it('rejects a rotation that is not a proper rotation', () => {
		expect(
			problemsWith(
				(m) =>
					(m.bodies[1].rotation = [
						[1, 0, 0],
						[0, 1, 0],
						[0, 0, -1]
					])
			)
		).toEqual([
			'body 1 "lower": rotation: must be a proper rotation matrix (orthonormal, determinant +1): its determinant is -1, negative: an improper rotation (a reflection; one axis has the wrong sign, e.g. a left-handed frame)'
		]);
	});

	it('rejects an unknown joint type and an empty model', () => {
		expect(problemsWith((m) => ((m.bodies[0].joint as { type: string }).type = 'ball'))).toEqual([
			'body 0 "upper": joint.type: must be "revolute" or "prismatic"'
		]);
		expect(modelProblems({ bodies: [] })).toEqual(['bodies: a model needs at least one body']);
	});

	it('compileModel throws a ModelError listing every problem', () => {
		const m = base();
		m.bodies[0].mass = -1;
		m.bodies[1].joint.axis = [0, 0, 0];
		try {
			compileModel(m);
			expect.unreachable();
		} catch (e) {
			expect(e).toBeInstanceOf(ModelError);
			expect((e as ModelError).problems).toHaveLength(2);
		}
	});
});
