// Time integration: energy conservation of a passive 3-D chain (RK45), RK4's fourth-order convergence, a known period.
import { describe, expect, it } from 'vitest';
import { compileModel, simulate, energy, type Vec3 } from '../../../src/lib/dynamics';
import { body, branchedChain, diag } from './fixtures';

describe('RK45 on a passive 3-D chain', () => {
	it('conserves total energy to 1e-6 relative over 10 s', () => {
		const model = compileModel(branchedChain());
		const G: Vec3 = [0, -9.81, 0];
		const times = Float64Array.from({ length: 101 }, (_, k) => k * 0.1);
		const q0 = [0.6, -0.4, 0.05, 0.8, -0.7, 0.3];
		const qd0 = [1.0, -0.5, 0.2, 1.5, 0.8, -1.2];
		const sim = simulate(model, { q0, qd0, times, method: 'rk45', atol: 1e-12, rtol: 1e-12, gravity: G });
		const n = model.n;
		const E = Array.from(times, (_, k) =>
			energy(model, sim.q.subarray(k * n, k * n + n), sim.qd.subarray(k * n, k * n + n), { gravity: G })
		);
		const T = E.map((e) => e.kinetic);
		// Relative to the energy actually exchanged: the largest kinetic energy reached.
		const scale = Math.max(...T);
		const drift = Math.max(...E.map((e) => Math.abs(e.total - E[0].total)));
		expect(scale).toBeGreaterThan(1);
		expect(drift / scale).toBeLessThan(1e-6);
		expect(sim.stats.rejected).toBeLessThan(sim.stats.steps);
	});
});

describe('RK4 on a pendulum', () => {
	const m = 1.5,
		l = 0.4,
		Icm = 0.02,
		g = 9.81;
	const model = compileModel({ bodies: [body({ name: 'p', parent: -1, mass: m, com: [0, -l, 0], inertia: diag(0.01, 0.01, Icm) })] });
	const opts = { q0: [1.2], qd0: [0.5], times: [0, 2], gravity: [0, -g, 0] as Vec3 };

	it('error shrinks by about 16× when the step halves (classical RK4 is fourth order)', () => {
		const ref = simulate(model, { ...opts, method: 'rk45', atol: 1e-14, rtol: 1e-14 }).q[1];
		const e1 = Math.abs(simulate(model, { ...opts, method: 'rk4', step: 0.02 }).q[1] - ref);
		const e2 = Math.abs(simulate(model, { ...opts, method: 'rk4', step: 0.01 }).q[1] - ref);
		const e3 = Math.abs(simulate(model, { ...opts, method: 'rk4', step: 0.005 }).q[1] - ref);
		expect(e1 / e2).toBeGreaterThan(13);
		expect(e1 / e2).toBeLessThan(19);
		expect(e2 / e3).toBeGreaterThan(13);
		expect(e2 / e3).toBeLessThan(19);
	});

	it('small swings have the compound pendulum period 2π √((I_cm + m l²) / (m g l))', () => {
		// Source: the small-angle compound pendulum, any mechanics textbook.
		const period = 2 * Math.PI * Math.sqrt((Icm + m * l * l) / (m * g * l));
		const sim = simulate(model, {
			q0: [1e-4],
			qd0: [0],
			times: [0, period / 2, period],
			method: 'rk45',
			atol: 1e-14,
			rtol: 1e-12,
			gravity: [0, -g, 0]
		});
		expect(sim.q[1] / 1e-4).toBeCloseTo(-1, 6);
		expect(sim.q[2] / 1e-4).toBeCloseTo(1, 6);
		expect(sim.qd[2]).toBeCloseTo(0, 9);
		// q̈ at the output is consistent with the equation of motion
		expect(sim.qdd[0]).toBeCloseTo((-m * g * l * Math.sin(1e-4)) / (Icm + m * l * l), 12);
	});

	it('applies a torque law: a constant torque holds the pendulum at the matching angle', () => {
		const q = 0.7;
		const hold = m * g * l * Math.sin(q);
		const sim = simulate(model, {
			q0: [q],
			qd0: [0],
			times: [0, 1, 3],
			torque: (_t, _q, _qd, out) => (out[0] = hold),
			method: 'rk4',
			step: 0.01,
			gravity: [0, -g, 0]
		});
		expect(sim.q[2]).toBeCloseTo(q, 12);
	});

	it('refuses output times that do not increase', () => {
		expect(() => simulate(model, { ...opts, times: [0, 1, 1] })).toThrow('times must increase (times[2] = 1 ≤ 1)');
	});
});
