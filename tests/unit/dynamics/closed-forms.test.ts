// Inverse dynamics against closed forms: a rigid pendulum, a planar double pendulum, prismatic joints under gravity.
import { describe, expect, it } from 'vitest';
import { compileModel, inverseDynamics, massMatrix, bias, type Vec3 } from '../../../src/lib/dynamics';
import { body, diag, rng } from './fixtures';

const g = 9.81;
const G: Vec3 = [0, -g, 0];
const close = (a: number, b: number, rel = 1e-12) => expect(Math.abs(a - b)).toBeLessThanOrEqual(rel * Math.max(1, Math.abs(b)));

describe('single rigid pendulum', () => {
	// Source: the compound pendulum, any mechanics textbook: Q = (I_cm + m l²) q̈ + m g l sin q, q from the downward vertical.
	const m = 2.3,
		l = 0.37,
		Icm = 0.041;
	const model = compileModel({
		bodies: [body({ name: 'pendulum', parent: -1, mass: m, com: [0, -l, 0], inertia: diag(0.02, 0.03, Icm) })]
	});
	it('matches Q = (I_cm + m l²) q̈ + m g l sin q at random states', () => {
		const r = rng(1);
		for (let k = 0; k < 50; k++) {
			const q = -3 + 6 * r(),
				qd = -5 + 10 * r(),
				qdd = -20 + 40 * r();
			const { Q, forceWorld } = inverseDynamics(model, [q], [qd], [qdd], { gravity: G });
			close(Q[0], (Icm + m * l * l) * qdd + m * g * l * Math.sin(q));
			// pin force = m (a_com − g): centripetal along the rod, tangential m l q̈ (same textbook)
			const ax = l * (qdd * Math.cos(q) - qd * qd * Math.sin(q));
			const ay = l * (qdd * Math.sin(q) + qd * qd * Math.cos(q));
			close(forceWorld[0], m * ax);
			close(forceWorld[1], m * (ay + g));
		}
	});
});

describe('planar double pendulum', () => {
	/*
	 * Source: Lagrange's equations for two links in a vertical plane, relative angles, link 1 from the +X axis,
	 * gravity −Y (the textbook two-link planar arm, e.g. Spong, Hutchinson & Vidyasagar, Robot Modeling and
	 * Control, 2006, §7.4 — form from memory, re-derived here). With T = ½ m1 lc1² q̇1² + ½ I1 q̇1²
	 * + ½ m2 |v_c2|² + ½ I2 (q̇1 + q̇2)², V = g [(m1 lc1 + m2 l1) sin q1 + m2 lc2 sin(q1 + q2)]:
	 *   M11 = m1 lc1² + m2 (l1² + lc2² + 2 l1 lc2 cos q2) + I1 + I2
	 *   M12 = m2 (lc2² + l1 lc2 cos q2) + I2,  M22 = m2 lc2² + I2,  h = m2 l1 lc2 sin q2
	 *   τ1 = M11 q̈1 + M12 q̈2 − h (2 q̇1 q̇2 + q̇2²) + (m1 lc1 + m2 l1) g cos q1 + m2 lc2 g cos(q1 + q2)
	 *   τ2 = M12 q̈1 + M22 q̈2 + h q̇1² + m2 lc2 g cos(q1 + q2)
	 */
	const m1 = 1.7,
		m2 = 1.1,
		l1 = 0.45,
		lc1 = 0.21,
		lc2 = 0.18,
		I1 = 0.029,
		I2 = 0.013;
	const model = compileModel({
		bodies: [
			body({ name: 'link1', parent: -1, mass: m1, com: [lc1, 0, 0], inertia: diag(0.001, 0.028, I1) }),
			body({ name: 'link2', parent: 0, anchor: [l1, 0, 0], mass: m2, com: [lc2, 0, 0], inertia: diag(0.001, 0.012, I2) })
		]
	});
	it('matches the equations from Lagrange', () => {
		const r = rng(2);
		for (let k = 0; k < 50; k++) {
			const [q1, q2] = [-3 + 6 * r(), -3 + 6 * r()];
			const [d1, d2] = [-4 + 8 * r(), -4 + 8 * r()];
			const [a1, a2] = [-10 + 20 * r(), -10 + 20 * r()];
			const M11 = m1 * lc1 ** 2 + m2 * (l1 ** 2 + lc2 ** 2 + 2 * l1 * lc2 * Math.cos(q2)) + I1 + I2;
			const M12 = m2 * (lc2 ** 2 + l1 * lc2 * Math.cos(q2)) + I2;
			const M22 = m2 * lc2 ** 2 + I2;
			const h = m2 * l1 * lc2 * Math.sin(q2);
			const g1 = (m1 * lc1 + m2 * l1) * g * Math.cos(q1) + m2 * lc2 * g * Math.cos(q1 + q2);
			const g2 = m2 * lc2 * g * Math.cos(q1 + q2);
			const t1 = M11 * a1 + M12 * a2 - h * (2 * d1 * d2 + d2 * d2) + g1;
			const t2 = M12 * a1 + M22 * a2 + h * d1 * d1 + g2;
			const { Q } = inverseDynamics(model, [q1, q2], [d1, d2], [a1, a2], { gravity: G });
			close(Q[0], t1);
			close(Q[1], t2);
			const M = massMatrix(model, [q1, q2]);
			close(M[0], M11);
			close(M[1], M12);
			close(M[2], M12);
			close(M[3], M22);
			const c = bias(model, [q1, q2], [d1, d2], { gravity: G });
			close(c[0], -h * (2 * d1 * d2 + d2 * d2) + g1);
			close(c[1], h * d1 * d1 + g2);
		}
	});
});

describe('prismatic joints', () => {
	it('a slider on a tilted axis: Q = m q̈ − m g·s (Newton’s second law along the axis)', () => {
		const s: Vec3 = [0.3, 0.8, -0.52];
		const n = Math.hypot(...s);
		const m = 4.2;
		const model = compileModel({
			bodies: [body({ name: 'slider', parent: -1, joint: { type: 'prismatic', axis: s }, mass: m, com: [0.1, 0.2, 0.3] })]
		});
		for (const [q, qd, qdd] of [
			[0, 0, 0],
			[0.2, 1.5, -3],
			[-0.4, -2, 7]
		]) {
			const { Q } = inverseDynamics(model, [q], [qd], [qdd], { gravity: G });
			close(Q[0], m * qdd - (m * (-g * s[1])) / n);
		}
	});

	it('a slider along a rotating arm feels the Coriolis force 2 m ω ṙ (bead on a spinning rod)', () => {
		// Source: bead on a rod rotating in a horizontal plane; τ = (I + m r²) θ̈ + 2 m r ṙ θ̇ and F = m (r̈ − r θ̇²).
		const m = 0.9,
			I = 0.05;
		const model = compileModel({
			bodies: [
				body({ name: 'rod', parent: -1, joint: { type: 'revolute', axis: [0, 1, 0] }, mass: 1e-9, inertia: diag(I, I, I) }),
				body({ name: 'bead', parent: 0, joint: { type: 'prismatic', axis: [1, 0, 0] }, mass: m, inertia: diag(0, 0, 0) })
			]
		});
		const r = rng(3);
		for (let k = 0; k < 20; k++) {
			const [th, x] = [r() * 6, 0.1 + r()];
			const [dth, dx] = [-3 + 6 * r(), -2 + 4 * r()];
			const [ddth, ddx] = [-5 + 10 * r(), -5 + 10 * r()];
			const { Q } = inverseDynamics(model, [th, x], [dth, dx], [ddth, ddx], { gravity: G });
			close(Q[0], (I + m * x * x) * ddth + 2 * m * x * dx * dth, 1e-9);
			close(Q[1], m * (ddx - x * dth * dth), 1e-9);
		}
	});
});
