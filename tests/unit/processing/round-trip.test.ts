// Round trip: forward-simulated trials (known joint moments) → a file in our layout → parseRecording → runPipeline → the same moments.
//
// Tolerance, and why. The trials are the demo's (arm reach with a 2 kg box; seated knee extension with a 1.5 kg
// ankle weight), sampled at 200 Hz (h = 5 ms), angles written as ° with 6 decimals.
//  - Central differences: q̈ error h²/12·q⁗ where the motion is smooth — ~1e-3 N·m here (measured 8e-4 N·m on
//    the reach, 0.004 % of its peak). At the joins of the minimum-jerk segments the jerk jumps by J = 60Δ/T³,
//    and the second difference there errs by J·h/6 (e.g. shoulder Δ = 110°, T = 1.5 s: 0.028 rad/s²), i.e.
//    ~0.02 N·m (0.1 % of the 19 N·m peak) on the few samples at a join.
//  - CSV rounding: ±5e-7° = 8.7e-9 rad, amplified by 4/h² in q̈ to ≤ 1.4e-3 rad/s²: < 2e-3 N·m.
//  - The integrator (RK4, 0.5 ms) and the law's consistency (ID of the simulated q̈ equals Q to 1e-13) add nothing visible.
// So: unfiltered, every sample including the first and last (holds, where the one-sided end formulas are exact)
// within 0.25 % of the trial's peak |Q|. With a 20 Hz zero-lag low-pass, far above the motion's content (< 3 Hz),
// the filter rounds the jerk joins a little more: within 0.6 % of the peak.
import { describe, expect, it } from 'vitest';
import participants from '../../../seeds/demo/participants.json';
import { kneeExtensionSpec, shelfReachSpec, type DemoParticipantsFile } from '../../../src/lib/processing/demo-recordings';
import { torquesCsv } from '../../../src/lib/processing/simulate-recording';
import { runPipeline } from '../../../src/lib/processing/pipeline';
import { itClosesTheLoop, readBack, simulatedTrial } from './simulated-trial';

const file = participants as unknown as DemoParticipantsFile;

describe.each([
	['arm reach with a box (ALD-001)', shelfReachSpec(file)],
	['seated knee extension with an ankle weight (KNE-001)', kneeExtensionSpec(file)]
])('%s', (_label, spec) => {
	const trial = simulatedTrial(spec);
	const { sim, n, F, peak } = trial;

	itClosesTheLoop(trial);

	it.each([
		[null, 0.0025],
		[20, 0.006]
	] as const)('cutoff %s Hz: moments equal the known torques within the stated share of the peak', async (cutoffHz, share) => {
		const recording = await readBack(sim);
		expect(recording.sampleHz).toBeCloseTo(200, 9);
		const r = runPipeline(sim.built, recording, { cutoffHz });
		expect(r.dofs.map((d) => d.name)).toEqual(sim.built.dofs.map((d) => d.name));
		let worst = 0;
		r.dofs.forEach((d, j) => {
			for (let k = 0; k < F; k++) worst = Math.max(worst, Math.abs(d.moment[k] - sim.Q[k * n + j]));
		});
		expect(worst).toBeLessThan(share * peak);
		// and the known torques file carries the same numbers (6 decimals)
		const rows = torquesCsv(sim).trim().split('\n');
		expect(rows.length).toBe(F + 1);
		const mid = Math.floor(F / 2);
		rows[mid + 1]
			.split(',')
			.slice(1)
			.forEach((v, j) => expect(Number(v)).toBeCloseTo(sim.Q[mid * n + j], 5));
	});
});
