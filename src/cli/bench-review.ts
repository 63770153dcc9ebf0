// `npm run bench:review`: the review's work on a long run, without the database: 26 moment curves of a 10-minute
// 200 Hz recording (120,000 samples each) reduced for drawing, the answer the review API sends (every sample to 6
// significant digits plus the drawn indices) serialised and measured, the repetitions of every curve normalised
// (about 100 cycles) with mean ± SD and peaks, and peak detection on one curve. Medians of 5 runs.
import { gzipSync } from 'node:zlib';
import { reduceForPlot, DEFAULT_PLOT_POINTS } from '../lib/processing/reduce';
import { cyclePeaks, detectPeaks, meanSd, normaliseCycles } from '../lib/processing/cycles';
import { round6 } from '../lib/server/review/review';

const sampleHz = 200;
const frames = Number(process.env.BENCH_FRAMES ?? 120_000);
const dofs = 26;
const time = Float64Array.from({ length: frames }, (_, k) => k / sampleHz);
// invented, smooth curves with a little noise (fixed pseudo-random sequence): 20 N·m swings at 0.17–0.3 Hz
let seed = 20261203;
const noise = () => ((seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31 - 0.5) * 0.4;
const curves = Array.from({ length: dofs }, (_, i) =>
	Float64Array.from(time, (t) => 20 * Math.sin(2 * Math.PI * (0.17 + 0.005 * i) * t) + 4 * Math.sin(2 * Math.PI * 1.3 * t + i) + noise())
);
const events = Array.from({ length: 101 }, (_, k) => (k * (frames - 1)) / sampleHz / 100);

const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
function timeIt<T>(f: () => T): { ms: number; out: T } {
	const t0 = performance.now();
	const out = f();
	return { ms: performance.now() - t0, out };
}

const rows: Record<string, number[]> = { reduce: [], answer: [], cycles: [], peaks: [] };
let bytes = 0;
let gz = 0;
let drawn = 0;
for (let run = 0; run < 5; run++) {
	const r = timeIt(() => curves.map((v) => reduceForPlot(time, v, DEFAULT_PLOT_POINTS)));
	rows.reduce.push(r.ms);
	drawn = Math.max(...r.out.map((x) => x.t.length));
	const a = timeIt(() =>
		JSON.stringify({
			t: Array.from(time, (x) => Math.round(x * 1e6) / 1e6),
			curves: curves.map((v, i) => ({ name: `dof${i}`, v: Array.from(v, round6), drawn: r.out[i].t.map((x) => Math.round(x * sampleHz)) }))
		})
	);
	rows.answer.push(a.ms);
	bytes = Buffer.byteLength(a.out);
	if (run === 0) gz = gzipSync(a.out).length;
	rows.cycles.push(
		timeIt(() =>
			curves.map((v) => {
				const { percent, cycles } = normaliseCycles(time, v, events);
				return [meanSd(cycles), cycles.map((c) => cyclePeaks(percent, c))];
			})
		).ms
	);
	rows.peaks.push(timeIt(() => detectPeaks(curves[0], time, { minProminence: 10, minDistanceS: 1 })).ms);
}
const mib = (b: number) => (b / 2 ** 20).toFixed(1);
console.log(`bench:review — ${dofs} curves × ${frames} samples (${frames / sampleHz / 60} min at ${sampleHz} Hz), medians of 5 runs`);
console.log(
	`  reduce every curve to ≤ ${DEFAULT_PLOT_POINTS} points (LTTB + bucket extremes): ${median(rows.reduce).toFixed(0)} ms (largest reduced curve: ${drawn} points)`
);
console.log(
	`  review answer (all samples, 6 significant digits, + drawn indices) to JSON: ${median(rows.answer).toFixed(0)} ms, ${mib(bytes)} MiB (${mib(gz)} MiB gzipped)`
);
console.log(`  100 repetitions of every curve to 0–100 %, mean ± SD and peaks: ${median(rows.cycles).toFixed(0)} ms`);
console.log(`  detect peaks on one curve (prominence 10, 1 s apart): ${median(rows.peaks).toFixed(1)} ms`);
console.log(`  peak RSS ${mib(process.resourceUsage().maxRSS * 1024)} MiB`);
