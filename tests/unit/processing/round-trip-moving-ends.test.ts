// Round trip of trials that MOVE AT BOTH ENDS: forward-simulated arm and leg (known joint moments) → a file in our layout →
// parseRecording → runPipeline → the same moments, also in the first and last samples.
//
// Outside source: the known torques of the forward simulation (computed-torque law, RK4, src/lib/processing/simulate-recording.ts);
// the closed loop ID(FD(Q)) = Q is checked below, and the engine's inverse dynamics against sympy (tests/unit/dynamics).
// The trials (src/lib/processing/edge-trials.ts) are minimum-jerk strokes plus a smooth random part, under way at t = 0 and
// at t = 4 s: no DOF starts or ends at rest, so the ends test the end treatment, not a trial that happens to be still.
//
// Tolerances, and why (measured values from `npm run bench:edges` in brackets):
//  - "middle" = samples at least 0.5 s from both ends (several edge zones in: the longest zone at 6 Hz is 0.13 s).
//  - Noise-free, default options (6 Hz, prediction): the middle's error is the filter's own (it rounds the strokes'
//    joins): ≤ 1 % of the peak [0.54 %, 0.78 %]. The largest error over the WHOLE trial ≤ 2 × the middle's — the target
//    of the issue [1.00 ×, both]; outside the edge zone ≤ 1.05 × the middle's [1.00 ×]. With scipy's defaults (reflect-9)
//    the same trials err 20–180 × the middle's at the ends [177 ×, 85 ×]: checked too, so the test shows the problem it fixes.
//  - Noise-free, no filter: every derivative is a central difference on measured samples except at the first and last,
//    which use the predicted continuation; whole ≤ 2 × middle [1.00 ×]; zone 1 sample.
//  - Noisy: Gaussian 0.15° on every angle (marker-based joint angles carry 0.1–0.2°: common practice, from memory),
//    seeds 1–5. Noise dominates the error everywhere [middle 13–16 % of the peak at 6 Hz for the leg, 7–10 % for the arm].
//    The edge zone stays short (≤ 0.08 s) [0.055 s]. Outside it the error is the middle's: pooled over the seeds, the RMS
//    error in the flanks (outside the zone, within 0.5 s of an end) ≤ 1.15 × the middle’s RMS [1.00–1.02 ×]; and per seed
//    the largest error outside the zone ≤ 1.4 × the middle's largest — the flanks add 0.9 s of samples to the middle's 3 s,
//    and their own noise peaks sometimes exceed the middle's [≤ 1.20 × over these seeds; ≤ 1.32 × over 20 seeds, as with
//    the cubic treatment's twice longer zone, so it is the noise, not the ends]. Inside the zone ≤ 4 × the middle's
//    [≤ 2.72 × at 6 Hz, ≤ 0.52 × without a filter], against 6–9 × with scipy’s defaults.
import { describe, expect, it } from 'vitest';
import participants from '../../../seeds/demo/participants.json';
import type { DemoParticipantsFile } from '../../../src/lib/processing/demo-recordings';
import { momentErrors, movingArmSpec, movingLegSpec, withNoise } from '../../../src/lib/processing/edge-trials';
import type { SimulatedRecording } from '../../../src/lib/processing/simulate-recording';
import { runPipeline, type RunOptionsInput } from '../../../src/lib/processing/pipeline';
import { itClosesTheLoop, readBack, simulatedTrial } from './simulated-trial';

const file = participants as unknown as DemoParticipantsFile;
const NOISE_DEG = 0.15;
const SEEDS = [1, 2, 3, 4, 5];

async function run(sim: SimulatedRecording, options: RunOptionsInput) {
	return runPipeline(sim.built, await readBack(sim), options);
}

describe.each([
	['leg swinging from an upright pelvis (KNE-001)', movingLegSpec(file)],
	['arm moving a 2 kg box (ALD-001)', movingArmSpec(file)]
])('%s, moving at both ends', (_label, spec) => {
	const trial = simulatedTrial(spec);
	const { sim, n, F } = trial;

	it('is a 4 s, 200 Hz trial in motion at its first and last samples', () => {
		expect(F).toBe(801);
		for (const k of [0, F - 1]) {
			let v = 0,
				a = 0;
			for (let j = 0; j < n; j++) {
				v = Math.max(v, Math.abs(sim.qd[k * n + j]));
				a = Math.max(a, Math.abs(sim.qdd[k * n + j]));
			}
			expect(v).toBeGreaterThan(0.5); // rad/s
			expect(a).toBeGreaterThan(2); // rad/s²
		}
	});

	itClosesTheLoop(trial);

	it('noise-free, default options: the whole trial within 2 × the middle’s error; outside the edge zone the middle’s', async () => {
		const r = await run(sim, {});
		expect(r.edgeZone.startSeconds).toBeLessThan(0.08);
		const e = momentErrors(sim, r);
		expect(e.middle).toBeLessThan(0.01 * e.peak);
		expect(e.whole).toBeLessThanOrEqual(2 * e.middle);
		expect(e.outsideZone).toBeLessThanOrEqual(1.05 * e.middle);
	});

	it("noise-free, scipy's defaults (reflect-9): the ends err many times the middle — the problem the end treatments fix", async () => {
		const e = momentErrors(sim, await run(sim, { endTreatment: 'reflect-9' }));
		expect(e.whole).toBeGreaterThan(20 * e.middle);
		expect(e.whole).toBeGreaterThan(0.3 * e.peak);
	});

	it('noise-free, no filter: whole trial within 2 × the middle’s error; a zone of one sample', async () => {
		const r = await run(sim, { cutoffHz: null });
		expect(r.edgeZone.startSamples).toBe(1);
		expect(r.edgeZone.endSamples).toBe(1);
		const e = momentErrors(sim, r);
		expect(e.middle).toBeLessThan(0.005 * e.peak);
		expect(e.whole).toBeLessThanOrEqual(2 * e.middle);
	});

	it.each([
		[6, 0.08],
		[null, 0.005 + 1e-12]
	] as const)(
		`with ${NOISE_DEG}° noise, cutoff %s Hz: the zone short, the error outside it the middle's`,
		async (cutoffHz, longestZone) => {
			let middleSq = 0,
				flankSq = 0;
			for (const seed of SEEDS) {
				const r = await run(withNoise(sim, NOISE_DEG, seed), { cutoffHz });
				expect(r.edgeZone.startSeconds).toBeLessThanOrEqual(longestZone);
				const e = momentErrors(sim, r);
				middleSq += e.middleRms ** 2;
				flankSq += e.flankRms ** 2;
				expect(e.outsideZone).toBeLessThanOrEqual(1.4 * e.middle);
				expect(e.insideZone).toBeLessThanOrEqual(4 * e.middle);
			}
			expect(Math.sqrt(flankSq / SEEDS.length)).toBeLessThanOrEqual(1.15 * Math.sqrt(middleSq / SEEDS.length));
		}
	);
});
