// `npm run bench:dynamics`: throughput of batch inverse dynamics and cost of M(q) + Cholesky on a 26-DOF tree.
import { compileModel, createWorkspace, inverseDynamicsBatch, massMatrixInto, choleskyInPlace } from '../lib/dynamics/index';
import { bilateralLimbTree } from '../lib/dynamics/bench-model';

const frames = Number(process.env.BENCH_FRAMES ?? 100_000);
const model = compileModel(bilateralLimbTree());
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

function time(label: string, reps: number, fn: () => void): number {
	fn(); // warm-up: let the JIT compile the loops
	const runs: number[] = [];
	for (let r = 0; r < reps; r++) {
		const t0 = process.hrtime.bigint();
		fn();
		runs.push(Number(process.hrtime.bigint() - t0) / 1e9);
		sample();
	}
	runs.sort((a, b) => a - b);
	const median = runs[Math.floor(runs.length / 2)];
	console.log(`${label}: median ${(median * 1000).toFixed(1)} ms of ${reps} runs (best ${(runs[0] * 1000).toFixed(1)} ms)`);
	return median;
}

console.log(`model: ${model.name}, ${n} DOF, ${frames.toLocaleString('en')} frames; Node ${process.version}`);
const tQ = time('batch inverse dynamics, Q only', 11, () => inverseDynamicsBatch(model, frames, q, qd, qdd, { Q }, {}, ws));
const tR = time('batch inverse dynamics, Q + reactions (body axes)', 7, () => inverseDynamicsBatch(model, frames, q, qd, qdd, { Q, force, torque }, {}, ws));
const mFrames = Math.min(frames, 20_000);
const M = new Float64Array(n * n);
const tM = time(`M(q) + Cholesky, ${mFrames.toLocaleString('en')} frames`, 5, () => {
	for (let k = 0; k < mFrames; k++) {
		massMatrixInto(model, q, M, ws, k * n);
		choleskyInPlace(M, n);
	}
});
const rate = (n * frames) / tQ;
console.log('');
console.log(`inverse dynamics: ${(rate / 1e6).toFixed(2)} million DOF·frames/s (target ≥ 10), ${((tQ / frames) * 1e6).toFixed(2)} µs per frame`);
console.log(`with reactions:   ${((n * frames) / tR / 1e6).toFixed(2)} million DOF·frames/s`);
console.log(`M(q) + Cholesky:  ${((tM / mFrames) * 1e6).toFixed(2)} µs per frame`);
console.log(`peak memory:      ${(peakRss / 2 ** 20).toFixed(0)} MiB resident (input and output arrays ${(((q.length * 3 + Q.length + force.length * 2) * 8) / 2 ** 20).toFixed(0)} MiB)`);
