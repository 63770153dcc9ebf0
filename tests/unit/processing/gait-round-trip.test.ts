// Round trip with ground contact (pure level): a walking trial forward-simulated (both legs on a moving pelvis, known
// torques from the tracking law, a known GRF, free moment and moving CoP on each foot that lands on a plate) gives angles
// at 200 Hz and plate signals at 1000 Hz (labToPlate, plates turned 10° and 95° about the vertical and offset, one
// forces-moments and one forces-cop); resampled to the angle rate, turned back into loads, contacts found and assigned,
// and run through the pipeline, the known torques come back. Outside source: the forward simulation (RK4 on
// M(q) q̈ = Q − c(q, q̇), the engine's mass matrix checked against sympy.physics.mechanics) and the laws of motion; the
// tolerances are stated below with what limits them.
import { describe, expect, it } from 'vitest';
import { simulateWalkingTrial } from '../../../src/lib/processing/simulate-walking';
import { groundFromSignals } from '../../../src/lib/processing/foot-contacts';
import { groundCutoffHz, runPipeline, runOptionsSchema } from '../../../src/lib/processing/pipeline';
import type { Recording } from '../../../src/lib/processing/recording';
import { momentErrors } from '../../reference/known-moments';

const trial = simulateWalkingTrial({ name: 'walk', body: { sex: 'female', bodyMass: 62, stature: 1.68 } });
const { sim } = trial;
const n = sim.model.n,
	frames = sim.time.length;
const rec: Recording = {
	time: sim.time,
	sampleHz: trial.angleHz,
	channels: sim.built.dofs.map((d, j) => ({ name: d.name, values: Float64Array.from({ length: frames }, (_, k) => sim.q[k * n + j]) })),
	warnings: [],
	header: [],
	delimiter: ','
};
const options = runOptionsSchema.parse({ cutoffHz: 15 });
const ground = groundFromSignals(trial.signals, {
	forceHz: trial.forceHz,
	angleHz: trial.angleHz,
	frames,
	cutoffHz: groundCutoffHz(options)
});
const result = runPipeline(sim.built, rec, options, undefined, { ground });

describe('gait round trip: known torques back from angles and plate signals', () => {
	it('finds one contact per plate, assigns it to the foot that made it, and uses it', () => {
		expect(ground.contacts).toHaveLength(2);
		expect(result.ground!.contacts.map((c) => [c.id, c.foot, c.shared, c.offPlate, c.used])).toEqual([
			['plate1#0', 'right', false, false, true],
			['plate2#0', 'left', false, false, true]
		]);
		// the plate threshold crossings within a sample of the known stance (20 N reached a little after strike)
		for (const c of result.ground!.contacts) {
			const s = trial.stances.find((x) => x.plate === c.plate)!;
			expect(c.start / trial.angleHz).toBeGreaterThan(s.start);
			expect(c.start / trial.angleHz).toBeLessThan(s.start + 0.08);
			expect(c.end / trial.angleHz).toBeLessThan(s.end);
			expect(c.end / trial.angleHz).toBeGreaterThan(s.end - 0.08);
		}
	});

	it('the GRF and CoP at the angle rate match the known ones mid-stance', () => {
		for (const [p, plate] of result.ground!.plates.entries()) {
			const known = trial.lab[p];
			const c = result.ground!.contacts[p];
			const mid = Math.round((c.start + c.end) / 2);
			const kF = mid * (trial.forceHz / trial.angleHz);
			for (let a = 0; a < 3; a++) {
				expect(Math.abs(plate.grf[3 * mid + a] - known.grf[3 * kF + a])).toBeLessThan(5); // N, of ~700 N (15 Hz filter)
				expect(Math.abs(plate.cop[3 * mid + a] - known.cop[3 * kF + a])).toBeLessThan(0.005); // m
			}
		}
	});

	it('joint moments within the stated tolerance outside the edge zone', () => {
		const { startSamples, endSamples } = result.edgeZone;
		const report: string[] = [];
		for (const d of result.dofs) {
			const j = sim.built.dofs.findIndex((x) => x.name === d.name);
			// apart: samples within 8 of a plate's threshold crossing, where the force under 20 N is not applied (at most 20 N × ~1 m)
			const { peak, worst, worstNear } = momentErrors(
				d.moment,
				(k) => sim.Q[k * n + j],
				{ from: startSamples, to: frames - endSamples },
				result.ground!.contacts
			);
			report.push(
				`${d.name}: peak ${peak.toFixed(2)} N·m, worst ${worst.toFixed(3)} (away from contact edges), ${worstNear.toFixed(3)} near them`
			);
			// away from the contacts' edges: 2.5 % of the trial's peak |Q| + 0.1 N·m (measured 2.1 % at the hip, 0.3 % at the
			// knee: the 15 Hz low-pass smooths the swing's accelerations); within 8 samples (40 ms) of a plate's threshold
			// crossing: 8 N·m (measured 5.4 N·m at the hip: the GRF under the 20 N threshold is not applied, and the filter
			// spreads the force's rise over a few samples)
			expect(worst, d.name).toBeLessThan(0.025 * peak + 0.1);
			expect(worstNear, d.name).toBeLessThan(8);
		}
		console.log(report.join('\n'));
	});

	it('writes the angles, the forces in our column scheme and the known moments', () => {
		expect(trial.anglesCsv.split('\n')[0]).toMatch(/^time \(s\),pelvis\.px \(m\),pelvis\.py \(m\),pelvis\.pz \(m\),pelvis\.rx \(deg\)/);
		expect(trial.forcesCsv.split('\n')[0]).toBe(
			'time (s),plate1.force.x (N),plate1.force.y (N),plate1.force.z (N),plate1.moment.x (N·m),plate1.moment.y (N·m),plate1.moment.z (N·m),' +
				'plate2.force.x (N),plate2.force.y (N),plate2.force.z (N),plate2.cop.x (m),plate2.cop.y (m),plate2.cop.z (m),plate2.freemoment (N·m)'
		);
		expect(trial.forcesCsv.trim().split('\n')).toHaveLength(1 + (frames - 1) * 5 + 1);
		expect(trial.torquesCsv.split('\n')[0]).toMatch(/^time \(s\),right\.hip\.flexion \(N·m\)/);
	});
});
