// `npm run bench:edges`: moment errors at the ends of trials that move at both ends, for every end treatment — arm and
// leg, the default cutoff and no filter, without and with measurement noise — against the simulation's known torques.
import participants from '../../seeds/demo/participants.json';
import { type DemoParticipantsFile } from '../lib/processing/demo-recordings';
import { END_TREATMENTS, DEFAULT_END_TREATMENT, type EndTreatment } from '../lib/processing/edges';
import { momentErrors, movingArmSpec, movingLegSpec, withNoise, type MomentErrors } from '../lib/processing/edge-trials';
import { runOptionsSchema, runPipeline } from '../lib/processing/pipeline';
import type { Recording } from '../lib/processing/recording';
import { simulateRecording, type SimulatedRecording } from '../lib/processing/simulate-recording';

const file: DemoParticipantsFile = participants;
const NOISE_DEG = 0.15;
const SEEDS = [1, 2, 3, 4, 5];
const defaultCutoff = runOptionsSchema.parse({}).cutoffHz;

/** The simulated angles as a parsed recording (SI units), without the file's rounding. */
function recordingOf(sim: SimulatedRecording): Recording {
	const n = sim.built.dofs.length;
	return {
		time: sim.time,
		sampleHz: sim.spec.sampleHz,
		channels: sim.built.expected.map((e, j) => ({
			name: e.name,
			values: Float64Array.from({ length: sim.time.length }, (_, k) => sim.q[k * n + j])
		})),
		warnings: [],
		header: ['time (s)', ...sim.built.expected.map((e) => e.name)],
		delimiter: ','
	};
}

const pct = (v: number, peak: number) => `${((100 * v) / peak).toFixed(2)} %`;
const nm = (v: number) => `${v.toFixed(3)}`;

console.log(`bench:edges — moment errors against the known torques of forward-simulated trials that move at both ends (4 s, 200 Hz)`);
console.log(
	`middle = samples at least 0.5 s from both ends; noisy rows: Gaussian ${NOISE_DEG}° on every angle, mean over seeds ${SEEDS.join(', ')}`
);
console.log(
	`whole/middle and outside/middle: ratios of the largest errors; flank RMS/middle RMS: outside the zone but within 0.5 s of an end, pooled over the seeds`
);
console.log(`default end treatment: ${DEFAULT_END_TREATMENT}; default cutoff: ${defaultCutoff} Hz\n`);

const header = [
	'limb',
	'cutoff',
	'noise',
	'treatment',
	'middle max',
	'whole max',
	'whole/middle',
	'outside zone max',
	'outside/middle',
	'flank/middle RMS',
	'edge zone'
];
const rows: string[][] = [];
for (const [limb, spec] of [
	['leg', movingLegSpec(file)],
	['arm', movingArmSpec(file)]
] as const) {
	const sim = simulateRecording(spec);
	for (const cutoffHz of [defaultCutoff, null]) {
		for (const noise of [0, NOISE_DEG]) {
			for (const treatment of END_TREATMENTS as readonly EndTreatment[]) {
				const seeds = noise ? SEEDS : [0];
				const runs: MomentErrors[] = [];
				let zone = { startSamples: 0, startSeconds: 0 };
				for (const seed of seeds) {
					const r = runPipeline(sim.built, recordingOf(noise ? withNoise(sim, noise, seed) : sim), { cutoffHz, endTreatment: treatment });
					zone = r.edgeZone;
					runs.push(momentErrors(sim, r));
				}
				const mean = (f: (e: MomentErrors) => number) => runs.reduce((s, e) => s + f(e), 0) / runs.length;
				const peak = runs[0].peak,
					middle = mean((e) => e.middle),
					whole = mean((e) => e.whole),
					outside = mean((e) => e.outsideZone);
				const rms = Math.sqrt(mean((e) => e.flankRms ** 2) / mean((e) => e.middleRms ** 2));
				rows.push([
					limb,
					cutoffHz === null ? 'none' : `${cutoffHz} Hz`,
					noise ? `${noise}°` : '0',
					treatment,
					`${pct(middle, peak)} (${nm(middle)} N·m)`,
					`${pct(whole, peak)} (${nm(whole)} N·m)`,
					(whole / middle).toFixed(2),
					`${pct(outside, peak)} (${nm(outside)} N·m)`,
					(outside / middle).toFixed(2),
					rms.toFixed(2),
					`${zone.startSeconds.toFixed(3)} s (${zone.startSamples})`
				]);
			}
		}
	}
	console.log(`${limb}: peak |known moment| ${sim.Q.reduce((m, v) => Math.max(m, Math.abs(v)), 0).toFixed(2)} N·m`);
}
console.log('');
const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => r[i].length)));
const line = (cells: string[]) => `| ${cells.map((c, i) => c.padEnd(widths[i])).join(' | ')} |`;
console.log(line(header));
console.log(`| ${widths.map((w) => '-'.repeat(w)).join(' | ')} |`);
for (const r of rows) console.log(line(r));
