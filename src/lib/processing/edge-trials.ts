// Trials that are in motion at their first and last samples (an arm and a leg), for measuring what the ends of a recording do to the results.
import { demoParticipant, type DemoParticipantsFile } from './demo-recordings';
import { minJerk, type RecordingSpec, type TargetPath } from './simulate-recording';

const deg = Math.PI / 180;

/** Uniform numbers in [0, 1) from a seed (mulberry32, a small well-known 32-bit generator), so trials and noise repeat exactly. */
export function seededUniform(seed: number): () => number {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = Math.imul(a ^ (a >>> 15), 1 | a);
		t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

/** Standard normal numbers from a seed (Box–Muller transform of seededUniform). */
export function seededGaussian(seed: number): () => number {
	const u = seededUniform(seed);
	return () => Math.sqrt(-2 * Math.log(1 - u())) * Math.cos(2 * Math.PI * u());
}

/**
 * A smooth random path: Σ w_k exp(−(t − c_k)² / (2 s²)), Gaussian bumps of width s every `spacing` seconds from
 * before `from` to after `to`, weights w_k normal with standard deviation `ampDeg` (°), with exact derivatives.
 * Its spectrum falls as exp(−(2π f s)²/2): smooth like a movement, yet neither a polynomial nor a finite sum of
 * sinusoids, so no end treatment continues it exactly.
 */
export function smoothRandom(seed: number, ampDeg: number, s: number, spacing: number, from: number, to: number): TargetPath {
	const g = seededGaussian(seed);
	const centres: number[] = [],
		weights: number[] = [];
	for (let c = from - 4 * s; c <= to + 4 * s; c += spacing) {
		centres.push(c);
		weights.push(ampDeg * deg * g());
	}
	const s2 = s * s;
	return (t) => {
		let q = 0,
			v = 0,
			a = 0;
		for (let k = 0; k < centres.length; k++) {
			const d = t - centres[k];
			if (Math.abs(d) > 9 * s) continue;
			const e = weights[k] * Math.exp(-(d * d) / (2 * s2));
			q += e;
			v -= (d / s2) * e;
			a += ((d * d) / (s2 * s2) - 1 / s2) * e;
		}
		return [q, v, a];
	};
}

/**
 * A movement that is under way when the recording starts and still under way when it stops: minimum-jerk strokes
 * (Flash & Hogan 1985) through [time s, angle °] waypoints, the first before t = 0 and the last after the end, plus a
 * smoothRandom path (bumps of 0.15 s every 0.1 s, weights of `ampDeg`). The strokes alone are piecewise quintic (a
 * polynomial or a short linear predictor continues them exactly); the random part makes the sum as irregular as a
 * real movement.
 */
export function movement(waypoints: [number, number][], seed: number, ampDeg: number, duration: number): TargetPath {
	const w = waypoints.map(([t, v]) => ({ t, value: v * deg }));
	const r = smoothRandom(seed, ampDeg, 0.15, 0.1, -1, duration + 1);
	return (t) => {
		const [q, v, a] = minJerk(w, t);
		const [rq, rv, ra] = r(t);
		return [q + rq, v + rv, a + ra];
	};
}

/**
 * A right leg swinging freely from an upright pelvis (KNE-001, Dempster via Winter 2009), 4 s at 200 Hz, moving at
 * both ends: hip, knee and ankle swings of 1.7–2 s per stroke (hip −5…45°, knee 10…70°), smaller out-of-plane
 * motions, each with a sinusoid of 0.6–1.1 Hz on top. Content mostly below 2 Hz, well below the default 6 Hz cutoff.
 */
export function movingLegSpec(file: DemoParticipantsFile, duration = 4): RecordingSpec {
	const { body, table } = demoParticipant(file, 'KNEE-60', 'KNE-001');
	return {
		name: 'kne-001-leg-swing-moving-ends',
		body,
		setup: { table, limbs: ['right.leg'], bases: { 'right.leg': { kind: 'fixed', orientation: 'upright' } }, gravity: [0, -9.81, 0] },
		sampleHz: 200,
		duration,
		targets: {
			'right.hip.flexion': movement([[-0.9, -5], [0.9, 45], [2.6, 0], [4.6, 40]], 101, 4, duration),
			'right.hip.adduction': movement([[-0.8, 0], [1.5, 6], [4.8, -3]], 102, 2, duration),
			'right.hip.internalRotation': movement([[-0.3, 5], [2.0, -5], [4.4, 6]], 103, 3, duration),
			'right.knee.flexion': movement([[-0.7, 70], [1.0, 10], [2.7, 65], [4.5, 20]], 104, 5, duration),
			'right.ankle.dorsiflexion': movement([[-0.6, -10], [1.2, 10], [3.0, -15], [4.9, 5]], 105, 3, duration),
			'right.ankle.inversion': movement([[-0.7, 2], [1.8, 8], [4.3, -2]], 106, 2, duration)
		}
	};
}

/**
 * A right arm (ALD-001, de Leva 1996) moving a 2 kg box held near the hand's centre of mass, thorax upright, 4 s at
 * 200 Hz, moving at both ends: shoulder flexion 30…110° and elbow 20…90° in strokes of 1.6–1.9 s, smaller forearm
 * and wrist motions, each with a sinusoid of 0.6–1.1 Hz on top.
 */
export function movingArmSpec(file: DemoParticipantsFile, duration = 4): RecordingSpec {
	const { body, table } = demoParticipant(file, 'SHELF-REACH', 'ALD-001');
	return {
		name: 'ald-001-arm-swing-moving-ends',
		body,
		setup: {
			table,
			limbs: ['right.arm'],
			bases: { 'right.arm': { kind: 'fixed', orientation: 'upright' } },
			loads: [{ limb: 'right.arm', segment: 'hand', massKg: 2, pointM: [0, -0.06, 0], label: 'box' }],
			gravity: [0, -9.81, 0]
		},
		sampleHz: 200,
		duration,
		targets: {
			'right.shoulder.flexion': movement([[-0.8, 30], [1.0, 110], [2.7, 40], [4.6, 100]], 107, 5, duration),
			'right.shoulder.abduction': movement([[-0.6, 10], [1.6, 25], [4.7, 8]], 108, 3, duration),
			'right.shoulder.internalRotation': movement([[-0.4, 10], [1.8, -5], [4.5, 10]], 109, 4, duration),
			'right.elbow.flexion': movement([[-0.6, 80], [1.1, 20], [2.9, 90], [4.5, 40]], 110, 5, duration),
			'right.forearm.pronation': movement([[-0.5, 70], [2.0, 85], [4.6, 65]], 111, 4, duration),
			'right.wrist.flexion': movement([[-0.6, 0], [1.5, -20], [3.3, 10], [4.8, -5]], 112, 3, duration),
			'right.wrist.ulnarDeviation': movement([[-0.2, 2], [2.0, 10], [4.3, 0]], 113, 2, duration)
		}
	};
}
