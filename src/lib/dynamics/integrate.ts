// Time integration of the equations of motion: fixed-step classical Runge–Kutta (RK4) and adaptive
// Dormand–Prince 5(4) (Dormand & Prince 1980, coefficients as in Hairer, Nørsett & Wanner, Solving ODEs I, Table 5.2).
import type { Model } from './model';
import { forwardDynamicsInto } from './forward';
import type { DynamicsOptions } from './rnea';
import { createWorkspace } from './workspace';

/** A joint-force law: write Q(t, q, q̇) into `out` (N·m or N per DOF). */
export type TorqueLaw = (t: number, q: Float64Array, qd: Float64Array, out: Float64Array) => void;

export interface SimulationOptions extends DynamicsOptions {
	q0: ArrayLike<number>;
	qd0: ArrayLike<number>;
	/** Increasing output times, s; the first is the start time. */
	times: ArrayLike<number>;
	/** Joint forces; default zero (a passive system). */
	torque?: TorqueLaw;
	method?: 'rk4' | 'rk45';
	/** RK4 step, s (each output interval is split into equal steps no longer than this). Default 1 ms. */
	step?: number;
	/** RK45 tolerances; defaults 1e-8 absolute and 1e-8 relative. */
	atol?: number;
	rtol?: number;
	/** RK45 bound on accepted + rejected steps; default 1,000,000. */
	maxSteps?: number;
}

export interface Simulation {
	times: Float64Array;
	/** frames × n, row per output time. */
	q: Float64Array;
	qd: Float64Array;
	qdd: Float64Array;
	stats: { steps: number; rejected: number; evaluations: number };
}

export function simulate(m: Model, opts: SimulationOptions): Simulation {
	const n = m.n,
		N = 2 * n;
	const times = Float64Array.from(opts.times);
	if (times.length === 0) throw new RangeError('times must hold at least one output time');
	for (let k = 1; k < times.length; k++) {
		if (!(times[k] > times[k - 1])) throw new RangeError(`times must increase (times[${k}] = ${times[k]} ≤ ${times[k - 1]})`);
	}
	if (opts.q0.length !== n || opts.qd0.length !== n) throw new RangeError(`q0 and qd0 need ${n} values`);
	const ws = createWorkspace(m);
	const dyn: DynamicsOptions = { gravity: opts.gravity, loads: opts.loads };
	const Q = new Float64Array(n),
		qdd = new Float64Array(n);
	const stats = { steps: 0, rejected: 0, evaluations: 0 };

	// state y = [q; q̇], derivative [q̇; q̈]
	const f = (t: number, y: Float64Array, dy: Float64Array) => {
		const q = y.subarray(0, n),
			qd = y.subarray(n);
		Q.fill(0);
		opts.torque?.(t, q, qd, Q);
		forwardDynamicsInto(m, q, qd, Q, qdd, dyn, ws);
		for (let i = 0; i < n; i++) {
			dy[i] = qd[i];
			dy[n + i] = qdd[i];
		}
		stats.evaluations++;
	};

	const out: Simulation = {
		times,
		q: new Float64Array(times.length * n),
		qd: new Float64Array(times.length * n),
		qdd: new Float64Array(times.length * n),
		stats
	};
	const y = new Float64Array(N);
	y.set(opts.q0 as ArrayLike<number>, 0);
	y.set(opts.qd0 as ArrayLike<number>, n);
	const dy = new Float64Array(N);
	const record = (k: number) => {
		f(times[k], y, dy);
		out.q.set(y.subarray(0, n), k * n);
		out.qd.set(y.subarray(n), k * n);
		out.qdd.set(dy.subarray(n), k * n);
	};
	record(0);
	if ((opts.method ?? 'rk45') === 'rk4') rk4(f, y, times, opts.step ?? 1e-3, record, stats, N);
	else dopri5(f, y, times, opts.atol ?? 1e-8, opts.rtol ?? 1e-8, opts.maxSteps ?? 1_000_000, record, stats, N);
	return out;
}

type Rhs = (t: number, y: Float64Array, dy: Float64Array) => void;

function rk4(
	f: Rhs,
	y: Float64Array,
	times: Float64Array,
	hMax: number,
	record: (k: number) => void,
	stats: Simulation['stats'],
	N: number
) {
	if (!(hMax > 0)) throw new RangeError('step must be positive');
	const k1 = new Float64Array(N),
		k2 = new Float64Array(N),
		k3 = new Float64Array(N),
		k4 = new Float64Array(N),
		yt = new Float64Array(N);
	for (let k = 1; k < times.length; k++) {
		const t0 = times[k - 1],
			span = times[k] - t0;
		const steps = Math.max(1, Math.ceil(span / hMax - 1e-9));
		const h = span / steps;
		for (let s = 0; s < steps; s++) {
			const t = t0 + s * h;
			f(t, y, k1);
			for (let i = 0; i < N; i++) yt[i] = y[i] + 0.5 * h * k1[i];
			f(t + 0.5 * h, yt, k2);
			for (let i = 0; i < N; i++) yt[i] = y[i] + 0.5 * h * k2[i];
			f(t + 0.5 * h, yt, k3);
			for (let i = 0; i < N; i++) yt[i] = y[i] + h * k3[i];
			f(t + h, yt, k4);
			for (let i = 0; i < N; i++) y[i] += (h / 6) * (k1[i] + 2 * k2[i] + 2 * k3[i] + k4[i]);
			stats.steps++;
		}
		record(k);
	}
}

// Dormand–Prince 5(4) tableau.
const C2 = 1 / 5,
	C3 = 3 / 10,
	C4 = 4 / 5,
	C5 = 8 / 9;
const A21 = 1 / 5;
const A31 = 3 / 40,
	A32 = 9 / 40;
const A41 = 44 / 45,
	A42 = -56 / 15,
	A43 = 32 / 9;
const A51 = 19372 / 6561,
	A52 = -25360 / 2187,
	A53 = 64448 / 6561,
	A54 = -212 / 729;
const A61 = 9017 / 3168,
	A62 = -355 / 33,
	A63 = 46732 / 5247,
	A64 = 49 / 176,
	A65 = -5103 / 18656;
const A71 = 35 / 384,
	A73 = 500 / 1113,
	A74 = 125 / 192,
	A75 = -2187 / 6784,
	A76 = 11 / 84;
// error weights: 5th-order minus embedded 4th-order solution
const E1 = 71 / 57600,
	E3 = -71 / 16695,
	E4 = 71 / 1920,
	E5 = -17253 / 339200,
	E6 = 22 / 525,
	E7 = -1 / 40;

function dopri5(
	f: Rhs,
	y: Float64Array,
	times: Float64Array,
	atol: number,
	rtol: number,
	maxSteps: number,
	record: (k: number) => void,
	stats: Simulation['stats'],
	N: number
) {
	if (!(atol > 0) || !(rtol >= 0)) throw new RangeError('atol must be positive and rtol not negative');
	const k1 = new Float64Array(N),
		k2 = new Float64Array(N),
		k3 = new Float64Array(N),
		k4 = new Float64Array(N),
		k5 = new Float64Array(N),
		k6 = new Float64Array(N),
		k7 = new Float64Array(N);
	const yt = new Float64Array(N),
		yn = new Float64Array(N);
	let t = times[0];
	const tEnd = times[times.length - 1];
	f(t, y, k1);
	let h = initialStep(f, t, y, k1, atol, rtol, N, tEnd - t);
	let next = 1;
	while (next < times.length) {
		if (stats.steps + stats.rejected >= maxSteps) throw new Error(`RK45 gave up after ${maxSteps} steps at t = ${t} s`);
		const target = times[next];
		let hStep = h;
		let lands = false;
		if (t + hStep >= target - 1e-12 * Math.max(1, Math.abs(target))) {
			hStep = target - t;
			lands = true;
		}
		for (let i = 0; i < N; i++) yt[i] = y[i] + hStep * A21 * k1[i];
		f(t + C2 * hStep, yt, k2);
		for (let i = 0; i < N; i++) yt[i] = y[i] + hStep * (A31 * k1[i] + A32 * k2[i]);
		f(t + C3 * hStep, yt, k3);
		for (let i = 0; i < N; i++) yt[i] = y[i] + hStep * (A41 * k1[i] + A42 * k2[i] + A43 * k3[i]);
		f(t + C4 * hStep, yt, k4);
		for (let i = 0; i < N; i++) yt[i] = y[i] + hStep * (A51 * k1[i] + A52 * k2[i] + A53 * k3[i] + A54 * k4[i]);
		f(t + C5 * hStep, yt, k5);
		for (let i = 0; i < N; i++) yt[i] = y[i] + hStep * (A61 * k1[i] + A62 * k2[i] + A63 * k3[i] + A64 * k4[i] + A65 * k5[i]);
		f(t + hStep, yt, k6);
		for (let i = 0; i < N; i++) yn[i] = y[i] + hStep * (A71 * k1[i] + A73 * k3[i] + A74 * k4[i] + A75 * k5[i] + A76 * k6[i]);
		f(t + hStep, yn, k7);
		let err = 0;
		for (let i = 0; i < N; i++) {
			const e = hStep * (E1 * k1[i] + E3 * k3[i] + E4 * k4[i] + E5 * k5[i] + E6 * k6[i] + E7 * k7[i]);
			const sc = atol + rtol * Math.max(Math.abs(y[i]), Math.abs(yn[i]));
			err += (e / sc) ** 2;
		}
		err = Math.sqrt(err / N);
		if (err <= 1) {
			t = lands ? target : t + hStep;
			y.set(yn);
			k1.set(k7); // first-same-as-last
			stats.steps++;
			if (lands) {
				record(next);
				next++;
			}
			const fac = err === 0 ? 5 : Math.min(5, Math.max(0.2, 0.9 * err ** -0.2));
			// keep the step the controller wanted, not the one shortened to land on an output time
			h = lands ? Math.max(h, hStep * fac) : hStep * fac;
		} else {
			stats.rejected++;
			h = Number.isFinite(err) ? hStep * Math.max(0.2, 0.9 * err ** -0.2) : hStep * 0.2;
			if (h < 1e-14 * Math.max(1, Math.abs(t)))
				throw new Error(`RK45 step size underflow at t = ${t} s: the motion is too stiff or diverges`);
		}
	}
}

/** Starting step size (Hairer, Nørsett & Wanner, Solving ODEs I, §II.4). */
function initialStep(f: Rhs, t: number, y: Float64Array, f0: Float64Array, atol: number, rtol: number, N: number, span: number): number {
	let d0 = 0,
		d1 = 0;
	for (let i = 0; i < N; i++) {
		const sc = atol + rtol * Math.abs(y[i]);
		d0 += (y[i] / sc) ** 2;
		d1 += (f0[i] / sc) ** 2;
	}
	d0 = Math.sqrt(d0 / N);
	d1 = Math.sqrt(d1 / N);
	let h0 = d0 < 1e-5 || d1 < 1e-5 ? 1e-6 : 0.01 * (d0 / d1);
	h0 = Math.min(h0, span);
	const y1 = new Float64Array(N),
		f1 = new Float64Array(N);
	for (let i = 0; i < N; i++) y1[i] = y[i] + h0 * f0[i];
	f(t + h0, y1, f1);
	let d2 = 0;
	for (let i = 0; i < N; i++) d2 += ((f1[i] - f0[i]) / (atol + rtol * Math.abs(y[i]))) ** 2;
	d2 = Math.sqrt(d2 / N) / h0;
	const h1 = Math.max(d1, d2) <= 1e-15 ? Math.max(1e-6, h0 * 1e-3) : (0.01 / Math.max(d1, d2)) ** 0.2;
	return Math.min(100 * h0, h1, span);
}
