// A fixed base turned by a typed rotation matrix (session set-up `rotationMatrix`): 6-decimal entries accepted and
// made orthonormal, larger errors and reflections refused with the numbers; the same moments as the Cardan angles.
import { describe, expect, it } from 'vitest';
import { buildSessionModel, cardanXYZ, sessionSetupProblems } from '../../../src/lib/processing/session-model';
import { runPipeline } from '../../../src/lib/processing/pipeline';
import { orthonormalityError } from '../../../src/lib/dynamics/rotation';
import type { Mat3 } from '../../../src/lib/dynamics';
import { deg, makeRecording } from './helpers';

const person = { sex: 'female' as const, bodyMass: 64.2, stature: 1.68 };
const angles: [number, number, number] = [10, -20, 35];
const R = cardanXYZ(angles[0] * deg, angles[1] * deg, angles[2] * deg);
const typed = R.map((row) => row.map((v) => Number(v.toFixed(6)))) as Mat3;
const setup = (base: Record<string, unknown>) => ({
	table: 'de-leva-1996' as const,
	limbs: ['right.arm' as const],
	bases: { 'right.arm': { kind: 'fixed', orientation: 'custom', ...base } }
});
const motion = (n: string, t: number) =>
	n.endsWith('shoulder.flexion') ? (40 + 30 * Math.sin(2 * t)) * deg : n.endsWith('elbow.flexion') ? 60 * deg : 0;

describe('a base turned by a typed rotation matrix', () => {
	it('6 decimals: accepted; the model’s root rotation is orthonormal within 1e-12 and the Cardan rotation within 1e-6', () => {
		expect(orthonormalityError(typed)).toBeGreaterThan(1e-8); // really rounded
		expect(sessionSetupProblems(setup({ rotationMatrix: typed }))).toEqual([]);
		const built = buildSessionModel(person, setup({ rotationMatrix: typed }) as never);
		const root = built.model.bodies.find((b) => b.rotation)!.rotation!;
		expect(orthonormalityError(root)).toBeLessThan(1e-12);
		for (let r = 0; r < 3; r++) for (let c = 0; c < 3; c++) expect(Math.abs(root[r][c] - R[r][c])).toBeLessThan(1e-6);
		expect(built.setup.bases['right.arm']).toMatchObject({ rotationMatrix: root });
	});

	it('gives the moments of the same base given as Cardan angles, within the rounding (relative 1e-5)', () => {
		const byMatrix = buildSessionModel(person, setup({ rotationMatrix: typed }) as never);
		const byAngles = buildSessionModel(person, setup({ cardanXYZDeg: angles }) as never);
		const a = runPipeline(byMatrix, makeRecording(byMatrix, 200, 100, motion), { cutoffHz: null });
		const b = runPipeline(byAngles, makeRecording(byAngles, 200, 100, motion), { cutoffHz: null });
		const peak = Math.max(...b.dofs.flatMap((d) => Array.from(d.moment, Math.abs)));
		for (let j = 0; j < b.dofs.length; j++)
			for (let k = 0; k < 200; k += 9) expect(Math.abs(a.dofs[j].moment[k] - b.dofs[j].moment[k])).toBeLessThan(1e-5 * peak);
	});

	it('an entry off by 1e-3, a reflection, and both orientation forms at once are refused, naming the field and the numbers', () => {
		const off = typed.map((row) => [...row]) as Mat3;
		off[2][0] += 1e-3;
		const [p] = sessionSetupProblems(setup({ rotationMatrix: off }));
		expect(p).toMatch(
			/^bases\.right\.arm\.rotationMatrix: must be a proper rotation matrix \(orthonormal, determinant \+1\): it is not orthonormal: ‖RᵀR − I‖ \(Frobenius norm\) is (\d\.\d+e-3|0\.00\d+), more than the tolerance 1\.00e-5/
		);
		const mirror = typed.map((row) => [row[0], row[1], -row[2]]) as Mat3;
		expect(sessionSetupProblems(setup({ rotationMatrix: mirror }))[0]).toMatch(
			/rotationMatrix: .*its determinant is -1, negative: an improper rotation/
		);
		expect(sessionSetupProblems(setup({ rotationMatrix: typed, cardanXYZDeg: angles }))).toEqual([
			'bases.right.arm.rotationMatrix: give the orientation once: cardanXYZDeg or rotationMatrix, not both'
		]);
	});
});
