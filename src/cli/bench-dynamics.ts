// `npm run bench:dynamics`: throughput of batch inverse dynamics (and of the reference passes) and cost of M(q) + Cholesky on a 26-DOF tree.
import {
	compileModel,
	createWorkspace,
	inverseDynamicsBatch,
	massMatrixInto,
	choleskyInPlace,
	STANDARD_GRAVITY
} from '../lib/dynamics/index';
import { rneaFrame } from '../lib/dynamics/rnea';
import { scaleLimbs } from '../lib/anthropometry/index';

const frames = Number(process.env.BENCH_FRAMES ?? 100_000);
// Both arms and legs of an 80 kg, 1.80 m man scaled from de Leva (1996): 26 DOF.
const scaled = scaleLimbs({ sex: 'male', bodyMass: 80, stature: 1.8 }, 'de-leva-1996', ['right.leg', 'left.leg', 'right.arm', 'left.arm']);
const model = compileModel(scaled.model);
const n = model.n;
if (n !== 26) throw new Error(`benchmark tree has ${n} DOF, expected 26`);

// smooth motion: each DOF a sum of two sinusoids at 100 Hz sampling, with exact derivatives
const q = new Float64Array(frames * n),
	qd = new Float64Array(frames * n),
	qdd = new Float64Array(frames * n);
for (let k = 0; k < frames; k++) {
	const t = k / 100;
	for (let i = 0; i < n; i++) {
		const w1 = 2 * Math.PI * (0.5 + 0.07 * i),
			w2 = 2 * Math.PI * (1.3 + 0.05 * i);
		const a1 = 0.5,
			a2 = 0.15;
		q[k * n + i] = a1 * Math.sin(w1 * t) + a2 * Math.sin(w2 * t + i);
		qd[k * n + i] = a1 * w1 * Math.cos(w1 * t) + a2 * w2 * Math.cos(w2 * t + i);
		qdd[k * n + i] = -a1 * w1 * w1 * Math.sin(w1 * t) - a2 * w2 * w2 * Math.sin(w2 * t + i);
	}
}
const Q = new Float64Array(frames * n);
const force = new Float64Array(frames * n * 3),
	torque = new Float64Array(frames * n * 3);
const ws = createWorkspace(model);
let peakRss = process.memoryUsage().rss;
const sample = () => (peakRss = Math.max(peakRss, process.memoryUsage().rss));

function median(runs: number[]): number {
	const r = [...runs].sort((a, b) => a - b);
	return r[Math.floor(r.length / 2)];
}

/** Runs the cases interleaved (so machine noise hits each alike) after one warm-up call of each. */
function timeInterleaved(cases: Record<string, () => void>, reps: number): Record<string, number> {
	for (const fn of Object.values(cases)) fn(); // warm-up: let the JIT compile the loops
	const runs: Record<string, number[]> = Object.fromEntries(Object.keys(cases).map((k) => [k, []]));
	for (let r = 0; r < reps; r++) {
		for (const [label, fn] of Object.entries(cases)) {
			const t0 = process.hrtime.bigint();
			fn();
			runs[label].push(Number(process.hrtime.bigint() - t0) / 1e9);
			sample();
		}
	}
	const out: Record<string, number> = {};
	for (const [label, r] of Object.entries(runs)) {
		out[label] = median(r);
		console.log(
			`${label}: median ${(out[label] * 1000).toFixed(1)} ms of ${reps} runs (best ${(Math.min(...r) * 1000).toFixed(1)} ms, worst ${(Math.max(...r) * 1000).toFixed(1)} ms)`
		);
	}
	return out;
}

console.log(`model: ${model.name}, ${n} DOF, ${frames.toLocaleString('en')} frames; Node ${process.version}`);
const mFrames = Math.min(frames, 20_000);
const M = new Float64Array(n * n);
const t = timeInterleaved(
	{
		'batch inverse dynamics, Q only': () => inverseDynamicsBatch(model, frames, q, qd, qdd, { Q }, {}, ws),
		'batch inverse dynamics, Q + reactions (body axes)': () =>
			inverseDynamicsBatch(model, frames, q, qd, qdd, { Q, force, torque }, {}, ws),
		[`M(q) + Cholesky, ${mFrames.toLocaleString('en')} frames`]: () => {
			for (let k = 0; k < mFrames; k++) {
				massMatrixInto(model, q, M, ws, k * n);
				choleskyInPlace(M, n);
			}
		},
		'reference Newton–Euler passes (rnea.ts), Q only': () => {
			for (let k = 0; k < frames; k++) rneaFrame(model, ws, q, qd, qdd, k * n, STANDARD_GRAVITY, null, Q, k * n);
		}
	},
	9
);
const [tQ, tR, tM, tRef] = Object.values(t);
const rate = (n * frames) / tQ;
console.log('');
console.log(
	`inverse dynamics: ${(rate / 1e6).toFixed(2)} million DOF·frames/s (target ≥ 10), ${((tQ / frames) * 1e6).toFixed(2)} µs per frame`
);
console.log(`with reactions:   ${((n * frames) / tR / 1e6).toFixed(2)} million DOF·frames/s`);
console.log(`M(q) + Cholesky:  ${((tM / mFrames) * 1e6).toFixed(2)} µs per frame`);
console.log(
	`reference passes: ${((n * frames) / tRef / 1e6).toFixed(2)} million DOF·frames/s (rnea.ts, the readable form; the batch runs rnea-fast.ts)`
);
console.log(
	`peak memory:      ${(peakRss / 2 ** 20).toFixed(0)} MiB resident (input and output arrays ${(((q.length * 3 + Q.length + force.length * 2) * 8) / 2 ** 20).toFixed(0)} MiB)`
);
