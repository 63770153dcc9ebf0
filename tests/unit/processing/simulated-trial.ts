// Shared by the round-trip tests: a forward-simulated trial (known joint moments), its file in our layout read back,
// and the check that the simulation closes the loop ID(FD(Q)) = Q.
import { expect, it } from 'vitest';
import {
	recordingCsv,
	simulateRecording,
	type RecordingSpec,
	type SimulatedRecording
} from '../../../src/lib/processing/simulate-recording';
import { parseRecording } from '../../../src/lib/processing/recording';
import { inverseDynamicsBatch } from '../../../src/lib/dynamics';

/** The simulated trial of `spec` with its DOF count n, frame count F and the peak |Q| of its driving moments. */
export function simulatedTrial(spec: RecordingSpec) {
	const sim = simulateRecording(spec);
	const n = sim.model.n,
		F = sim.time.length;
	let peak = 0;
	for (let i = 0; i < F * n; i++) peak = Math.max(peak, Math.abs(sim.Q[i]));
	return { sim, n, F, peak };
}

/** The trial written as a file in our layout and parsed back; throws with the problems if the file is refused. */
export async function readBack(sim: SimulatedRecording) {
	const parsed = await parseRecording(recordingCsv(sim), { fileName: `${sim.spec.name}.csv`, expected: sim.built.expected });
	if (!parsed.ok) throw new Error(JSON.stringify(parsed.problems));
	return parsed.recording;
}

/** A test: inverse dynamics of the simulated q, q̇, q̈ returns the driving Q (to 1e-9 of its peak). */
export function itClosesTheLoop(trial: ReturnType<typeof simulatedTrial>) {
	it('the simulation is consistent: inverse dynamics of the simulated q, q̇, q̈ returns the driving Q', () => {
		const { sim, n, F, peak } = trial;
		const Q = new Float64Array(F * n);
		inverseDynamicsBatch(sim.model, F, sim.q, sim.qd, sim.qdd, { Q }, { gravity: sim.built.setup.gravity as [number, number, number] });
		for (let i = 0; i < F * n; i++) expect(Math.abs(Q[i] - sim.Q[i])).toBeLessThan(1e-9 * peak);
	});
}
