// Trials that are in motion at their first and last samples (an arm and a leg), for measuring what the ends of a recording do to the results.
import { demoParticipant, type DemoParticipantsFile } from './demo-recordings';
import { seededGaussian, smoothRandom } from './edges';
import type { PipelineResult } from './pipeline';
import { minJerk, type RecordingSpec, type SimulatedRecording, type TargetPath } from './simulate-recording';

const deg = Math.PI / 180;

/**
 * A movement that is under way when the recording starts and still under way when it stops: minimum-jerk strokes
 * (Flash & Hogan 1985) through [time s, angle °] waypoints, the first before t = 0 and the last after the end, plus a
 * smoothRandom path (bumps of 0.15 s every 0.1 s, weights of `ampDeg`). The strokes alone are piecewise quintic (a
 * polynomial or a short linear predictor continues them exactly); the random part makes the sum as irregular as a
 * real movement.
 */
export function movement(waypoints: [number, number][], seed: number, ampDeg: number, duration: number): TargetPath {
	const w = waypoints.map(([t, v]) => ({ t, value: v * deg }));
	const r = smoothRandom(seed, ampDeg * deg, 0.15, 0.1, -1, duration + 1);
	return (t) => {
		const [q, v, a] = minJerk(w, t);
		const [rq, rv, ra] = r(t);
		return [q + rq, v + rv, a + ra];
	};
}

/**
 * A right leg swinging freely from an upright pelvis (KNE-001, Dempster via Winter 2009), 4 s at 200 Hz, moving at
 * both ends: hip, knee and ankle swings of 1.7–2 s per stroke (hip −5…45°, knee 10…70°), smaller out-of-plane
 * motions, each with a smooth random part of 2–5° bumps on top. Content mostly below 3 Hz, under the default 6 Hz cutoff.
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
			'right.hip.flexion': movement(
				[
					[-0.9, -5],
					[0.9, 45],
					[2.6, 0],
					[4.6, 40]
				],
				101,
				4,
				duration
			),
			'right.hip.adduction': movement(
				[
					[-0.8, 0],
					[1.5, 6],
					[4.8, -3]
				],
				102,
				2,
				duration
			),
			'right.hip.internalRotation': movement(
				[
					[-0.3, 5],
					[2.0, -5],
					[4.4, 6]
				],
				103,
				3,
				duration
			),
			'right.knee.flexion': movement(
				[
					[-0.7, 70],
					[1.0, 10],
					[2.7, 65],
					[4.5, 20]
				],
				104,
				5,
				duration
			),
			'right.ankle.dorsiflexion': movement(
				[
					[-0.6, -10],
					[1.2, 10],
					[3.0, -15],
					[4.9, 5]
				],
				105,
				3,
				duration
			),
			'right.ankle.inversion': movement(
				[
					[-0.7, 2],
					[1.8, 8],
					[4.3, -2]
				],
				106,
				2,
				duration
			)
		}
	};
}

/**
 * A right arm (ALD-001, de Leva 1996) moving a 2 kg box held near the hand's centre of mass, thorax upright, 4 s at
 * 200 Hz, moving at both ends: shoulder flexion 30…110° and elbow 20…90° in strokes of 1.6–1.9 s, smaller forearm
 * and wrist motions, each with a smooth random part of 2–5° bumps on top.
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
			'right.shoulder.flexion': movement(
				[
					[-0.8, 30],
					[1.0, 110],
					[2.7, 40],
					[4.6, 100]
				],
				107,
				5,
				duration
			),
			'right.shoulder.abduction': movement(
				[
					[-0.6, 10],
					[1.6, 25],
					[4.7, 8]
				],
				108,
				3,
				duration
			),
			'right.shoulder.internalRotation': movement(
				[
					[-0.4, 10],
					[1.8, -5],
					[4.5, 10]
				],
				109,
				4,
				duration
			),
			'right.elbow.flexion': movement(
				[
					[-0.6, 80],
					[1.1, 20],
					[2.9, 90],
					[4.5, 40]
				],
				110,
				5,
				duration
			),
			'right.forearm.pronation': movement(
				[
					[-0.5, 70],
					[2.0, 85],
					[4.6, 65]
				],
				111,
				4,
				duration
			),
			'right.wrist.flexion': movement(
				[
					[-0.6, 0],
					[1.5, -20],
					[3.3, 10],
					[4.8, -5]
				],
				112,
				3,
				duration
			),
			'right.wrist.ulnarDeviation': movement(
				[
					[-0.2, 2],
					[2.0, 10],
					[4.3, 0]
				],
				113,
				2,
				duration
			)
		}
	};
}

/** The simulated trial with Gaussian noise of noiseDeg (°) added to every angle (seeded per channel), as a marker-based recording would carry. */
export function withNoise(sim: SimulatedRecording, noiseDeg: number, seed: number): SimulatedRecording {
	const n = sim.built.dofs.length,
		F = sim.time.length;
	const q = Float64Array.from(sim.q);
	sim.built.dofs.forEach((d, j) => {
		if (d.kind !== 'angle' || noiseDeg === 0) return;
		const g = seededGaussian(seed * 1000 + j);
		for (let k = 0; k < F; k++) q[k * n + j] += noiseDeg * deg * g();
	});
	return { ...sim, q };
}

/** Largest moment errors against the simulation's known torques, as N·m (every reported DOF, every sample in each stretch). */
export interface MomentErrors {
	/** Largest |known moment| over the trial. */
	peak: number;
	/** Samples at least middleSeconds from both ends. */
	middle: number;
	whole: number;
	/** Outside the result's edge zone. */
	outsideZone: number;
	/** Inside the edge zone (0 when it is empty). */
	insideZone: number;
	/** Root mean square over the middle, and over the flanks: outside the edge zone but closer than middleSeconds to an end. */
	middleRms: number;
	flankRms: number;
}

export function momentErrors(sim: SimulatedRecording, r: PipelineResult, middleSeconds = 0.5): MomentErrors {
	const n = sim.built.dofs.length,
		F = sim.time.length;
	const m = Math.round(middleSeconds * r.sampleHz);
	const z0 = r.edgeZone.startSamples,
		z1 = F - r.edgeZone.endSamples;
	const e = { peak: 0, middle: 0, whole: 0, outsideZone: 0, insideZone: 0, middleRms: 0, flankRms: 0 };
	let middleCount = 0,
		flankCount = 0;
	const col = new Map(sim.built.dofs.map((d, j) => [d.name, j]));
	for (const d of r.dofs) {
		const j = col.get(d.name)!;
		for (let k = 0; k < F; k++) {
			const known = sim.Q[k * n + j];
			const err = Math.abs(d.moment[k] - known);
			e.peak = Math.max(e.peak, Math.abs(known));
			e.whole = Math.max(e.whole, err);
			if (k >= m && k < F - m) {
				e.middle = Math.max(e.middle, err);
				e.middleRms += err * err;
				middleCount++;
			} else if (k >= z0 && k < z1) {
				e.flankRms += err * err;
				flankCount++;
			}
			if (k >= z0 && k < z1) e.outsideZone = Math.max(e.outsideZone, err);
			else e.insideZone = Math.max(e.insideZone, err);
		}
	}
	e.middleRms = Math.sqrt(e.middleRms / middleCount);
	e.flankRms = flankCount ? Math.sqrt(e.flankRms / flankCount) : 0;
	return e;
}
