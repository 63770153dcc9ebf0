// Gait events, cycles and spatiotemporal parameters.
//  - Plate events: a half-sine vertical force whose 20 N crossings are known in closed form (t = t_on + D·asin(20/W)/π);
//    each event must lie at the first sample past the crossing (within one sample).
//  - Kinematic events (Zeni, Richards & Higginson 2008, from memory): a generated walk whose contacts are known; the
//    stated tolerance is ±2 samples at 200 Hz (10 ms), see the derivation beside the test.
//  - Cycles and spatiotemporal parameters: a hand-written event sequence whose values are worked out by hand beside each
//    check; the means and sample SDs were checked with Python's statistics.mean / statistics.stdev.
import { describe, expect, it } from 'vitest';
import {
	GaitError,
	gaitCycles,
	gaitEvents,
	kinematicEvents,
	mergeEvents,
	normaliseGait,
	plateEvents,
	progressionDirection,
	spatiotemporal,
	type Foot,
	type GaitEvent,
	type GaitPaths,
	type PlateContact
} from '../../../src/lib/processing/gait';
import { DEFAULT_CONTACT_THRESHOLD_N, findContacts } from '../../../src/lib/processing/forces';
import { plate1 } from './forces/plates';

function thrown(fn: () => unknown): GaitError {
	try {
		fn();
	} catch (e) {
		expect(e).toBeInstanceOf(GaitError);
		return e as GaitError;
	}
	throw new Error('expected a GaitError');
}

const grid = (n: number, hz: number) => Float64Array.from({ length: n }, (_, k) => k / hz);

/**
 * The loaded intervals of a vertical force (N per sample) as a run finds them: findContacts on a plate in the floor
 * (no shortest contact), its inclusive last loaded sample made the exclusive end gait.ts takes (as the run does).
 */
function loadedIntervals(fy: ArrayLike<number>, thresholdN?: number): { start: number; end: number }[] {
	const grf = new Float64Array(3 * fy.length);
	const cop = new Float64Array(3 * fy.length);
	for (let i = 0; i < fy.length; i++) {
		grf[3 * i + 1] = fy[i];
		cop.set([1, 0, 0.5], 3 * i); // plate1's centre
	}
	return findContacts(plate1, { grf, cop }, { sampleHz: 100, thresholdN, minDurationS: 0 }).map((c) => ({
		start: c.start,
		end: c.end + 1
	}));
}

describe('plate events', () => {
	it('finds the 20 N crossings of a half-sine contact within one sample (closed form)', () => {
		const hz = 200;
		const time = grid(400, hz);
		const W = 800;
		const contacts = [
			{ on: 0.3037, off: 0.9512 },
			{ on: 1.2501, off: 1.8899 }
		];
		const fy = Float64Array.from(time, (t) => {
			for (const c of contacts) if (t > c.on && t < c.off) return W * Math.sin((Math.PI * (t - c.on)) / (c.off - c.on));
			return 0;
		});
		expect(DEFAULT_CONTACT_THRESHOLD_N).toBe(20);
		const intervals = loadedIntervals(fy);
		expect(intervals.length).toBe(2);
		const assigned: PlateContact[] = intervals.map((iv, k) => ({ ...iv, plate: 'plate1', foot: k === 0 ? 'right' : 'left' }));
		const events = plateEvents(assigned, time);
		expect(events.map((e) => `${e.foot} ${e.kind}`)).toEqual(['right strike', 'right off', 'left strike', 'left off']);
		contacts.forEach((c, k) => {
			const D = c.off - c.on;
			const rise = c.on + (D * Math.asin(20 / W)) / Math.PI; // force reaches 20 N
			const fall = c.off - (D * Math.asin(20 / W)) / Math.PI; // force falls below 20 N
			const strike = events[2 * k];
			const off = events[2 * k + 1];
			expect(strike.source).toBe('plate');
			expect(strike.time).toBe(time[strike.sample]);
			expect(strike.time - rise).toBeGreaterThanOrEqual(0);
			expect(strike.time - rise).toBeLessThan(1 / hz);
			expect(off.time - fall).toBeGreaterThan(0);
			expect(off.time - fall).toBeLessThanOrEqual(1 / hz);
		});
	});

	it('gives no strike to a contact under way at the start and no foot off to one still under way at the end', () => {
		const fy = [30, 25, 5, Number.NaN, 20, 50, 19.9, 0, 40, 40];
		expect(loadedIntervals(fy)).toEqual([
			{ start: 0, end: 2 },
			{ start: 4, end: 6 },
			{ start: 8, end: 10 }
		]);
		const time = grid(10, 100);
		const events = plateEvents(
			loadedIntervals(fy).map((iv) => ({ ...iv, plate: 'plate2', foot: 'left' as Foot })),
			time
		);
		expect(events.map((e) => [e.kind, e.sample])).toEqual([
			['off', 2],
			['strike', 4],
			['off', 6],
			['strike', 8]
		]);
		expect(loadedIntervals(fy, 35)).toEqual([
			{ start: 5, end: 6 },
			{ start: 8, end: 10 }
		]);
	});

	it('refuses a contact outside the recording and a bad threshold, naming the entry', () => {
		const time = grid(10, 100);
		expect(thrown(() => plateEvents([{ plate: 'plate1', foot: 'left', start: 4, end: 11 }], time)).message).toBe(
			'contacts[0] (plate1, left): start 4 and end 11 must be whole sample numbers with 0 ≤ start < end ≤ 10.'
		);
		expect(() => loadedIntervals([1, 2], -1)).toThrow('The contact threshold must be 0 N or more; got -1.');
	});
});

// A generated walk (our own test data): the pelvis moves at v along a direction 30° from lab X in the floor plane; each
// foot is a rigid heel–toe pair that stands still during stance and, during swing, moves forward by one stride with a
// trapezoidal speed profile (ramps of r s at either end). Contacts are on the sample grid.
const HZ = 200;
const V = 1.2; // m/s
const T = 1.1; // cycle, s
const STANCE = 0.66; // s (60 %)
const SWING = T - STANCE;
const L = V * T; // stride, m
const RAMP = 0.02; // s
const VP = L / (SWING - RAMP); // top swing speed, m/s
const THETA = Math.PI / 6;
const DIR = { x: Math.cos(THETA), z: Math.sin(THETA) };
const FIRST_STRIKE: Record<Foot, number> = { right: 0.3, left: 0.3 + T / 2 };

/** Distance covered u s into swing (m). */
function swingDistance(u: number): number {
	if (u < RAMP) return (VP * u * u) / (2 * RAMP);
	if (u <= SWING - RAMP) return VP * (RAMP / 2 + (u - RAMP));
	return L - (VP * (SWING - u) ** 2) / (2 * RAMP);
}

/** Heel distance along the direction of progression at time t. */
function heelAlong(foot: Foot, t: number): number {
	const ts = FIRST_STRIKE[foot];
	const k = Math.floor((t - ts) / T);
	const tau = t - ts - k * T;
	const spot = V * ts + 0.35 + k * L; // the heel lands 0.35 m ahead of the pelvis
	return tau < STANCE ? spot : spot + swingDistance(tau - STANCE);
}

function walk(seconds: number): { time: Float64Array; paths: GaitPaths; truth: GaitEvent[] } {
	const n = Math.round(seconds * HZ) + 1;
	const time = grid(n, HZ);
	const pelvis = new Float64Array(3 * n);
	const feet = {
		left: { heel: new Float64Array(3 * n), toe: new Float64Array(3 * n) },
		right: { heel: new Float64Array(3 * n), toe: new Float64Array(3 * n) }
	};
	const put = (a: Float64Array, i: number, along: number, side: number, y: number) => {
		a[3 * i] = along * DIR.x - side * DIR.z;
		a[3 * i + 1] = y;
		a[3 * i + 2] = along * DIR.z + side * DIR.x;
	};
	for (let i = 0; i < n; i++) {
		const t = time[i];
		put(pelvis, i, V * t, 0, 0.9);
		for (const foot of ['left', 'right'] as Foot[]) {
			const side = foot === 'right' ? 0.1 : -0.1;
			const h = heelAlong(foot, t);
			put(feet[foot].heel, i, h, side, 0.08);
			put(feet[foot].toe, i, h + 0.2, side, 0.02);
		}
	}
	const truth: GaitEvent[] = [];
	for (const foot of ['left', 'right'] as Foot[])
		for (let t = FIRST_STRIKE[foot] - T; t < seconds; t += T) {
			for (const [kind, at] of [
				['strike', t],
				['off', t + STANCE]
			] as const) {
				const sample = Math.round(at * HZ);
				if (sample > 0 && sample < n) truth.push({ foot, kind, sample, time: time[sample], source: 'kinematic' });
			}
		}
	return { time, paths: { pelvis, ...feet }, truth };
}

describe('kinematic events (Zeni, Richards & Higginson 2008)', () => {
	// Tolerance ±2 samples (10 ms at 200 Hz). The heel's distance ahead of the pelvis peaks where the heel's forward
	// speed falls back to the pelvis's, r·v/vp = 0.02·1.2/3.3 ≈ 7.3 ms before contact here; the toe's trough lies as
	// far after foot off. Rounding to a sample adds at most half a sample.
	const TOL = 2;

	it('finds every strike and foot off of a generated walk along a direction 30° off lab X', () => {
		const { time, paths, truth } = walk(6);
		const d = progressionDirection(paths.pelvis);
		expect(d.moving).toBe(true);
		expect(d.x).toBeCloseTo(Math.cos(THETA), 12);
		expect(d.z).toBeCloseTo(Math.sin(THETA), 12);
		expect(d.travelledM).toBeCloseTo(V * 6, 9);
		const found = kinematicEvents(time, paths);
		// every contact inside the recording is found (22 events in 6 s), each once, and nothing else (measured: strikes
		// 1 sample early, foot offs 1 sample late)
		expect(truth.length).toBe(22);
		for (const e of truth) {
			const match = found.filter((f) => f.foot === e.foot && f.kind === e.kind && Math.abs(f.sample - e.sample) <= TOL);
			expect(match.length, `${e.foot} ${e.kind} at ${e.time} s`).toBe(1);
			expect(match[0].source).toBe('kinematic');
			expect(match[0].sample).toBeLessThanOrEqual(e.kind === 'strike' ? e.sample : e.sample + TOL);
		}
		expect(found.length).toBe(truth.length);
	});

	it('lets plate events win where a foot is on a plate and fills the rest from the kinematics', () => {
		const { time, paths, truth } = walk(6);
		const rs = truth.filter((e) => e.foot === 'right').sort((a, b) => a.sample - b.sample);
		const strike = rs.find((e) => e.kind === 'strike' && e.time > 1)!;
		const off = rs.find((e) => e.kind === 'off' && e.sample > strike.sample)!;
		const contacts: PlateContact[] = [{ plate: 'plate1', foot: 'right', start: strike.sample, end: off.sample }];
		const events = gaitEvents({ time, contacts, paths });
		const plate = events.filter((e) => e.source === 'plate');
		expect(plate.map((e) => [e.foot, e.kind, e.sample])).toEqual([
			['right', 'strike', strike.sample],
			['right', 'off', off.sample]
		]);
		// no kinematic event of the right foot within 0.1 s of the contact
		const from = time[strike.sample] - 0.1;
		const to = time[off.sample - 1] + 0.1;
		expect(events.filter((e) => e.foot === 'right' && e.source === 'kinematic' && e.time >= from && e.time <= to)).toEqual([]);
		// the left foot and the other right events are kinematic
		expect(events.length).toBe(kinematicEvents(time, paths).length);
		const merged = mergeEvents(plateEvents(contacts, time), kinematicEvents(time, paths), contacts, time);
		expect(merged).toEqual(events);
		// and the cycles built from them have the generated timing within the tolerance
		const cycles = gaitCycles(events, time).filter((c) => !c.excluded);
		expect(cycles.length).toBeGreaterThanOrEqual(6);
		for (const c of cycles) {
			expect(Math.abs(c.cycleTimeS - T)).toBeLessThanOrEqual((2 * TOL) / HZ);
			expect(Math.abs(c.stancePercent - 60)).toBeLessThanOrEqual((100 * 2 * TOL) / HZ / T + 1e-9);
		}
	});

	it('refuses a path of the wrong length, naming it', () => {
		const { time, paths } = walk(1);
		const short = { ...paths, left: { heel: Array.from(paths.left!.heel).slice(3), toe: paths.left!.toe } };
		expect(thrown(() => kinematicEvents(time, short)).message).toBe(
			`paths.left.heel has ${3 * time.length - 3} values; expected 3 per sample (x, y, z) = ${3 * time.length}.`
		);
	});
});

// Hand-written sequence at 100 Hz, 0 … 3 s (301 samples):
//   right: strike 0.20, off 0.80, strike 1.20, off 1.90, strike 2.30
//   left:  off 0.30, strike 0.70, off 1.30, strike 1.75, off 2.40, strike 2.85
const HZ2 = 100;
const time2 = grid(301, HZ2);
const seq: [Foot, 'strike' | 'off', number][] = [
	['right', 'strike', 0.2],
	['left', 'off', 0.3],
	['left', 'strike', 0.7],
	['right', 'off', 0.8],
	['right', 'strike', 1.2],
	['left', 'off', 1.3],
	['left', 'strike', 1.75],
	['right', 'off', 1.9],
	['right', 'strike', 2.3],
	['left', 'off', 2.4],
	['left', 'strike', 2.85]
];
const events2: GaitEvent[] = seq.map(([foot, kind, t]) => {
	const sample = Math.round(t * HZ2);
	return { foot, kind, sample, time: time2[sample], source: 'plate' };
});
// Heel landing spots along the direction of progression (m): right 0.30, 1.55, 2.85; left 0.90, 2.20, 3.45.
const SPOTS: Record<Foot, [number, number][]> = {
	right: [
		[0.2, 0.3],
		[1.2, 1.55],
		[2.3, 2.85]
	],
	left: [
		[0.7, 0.9],
		[1.75, 2.2],
		[2.85, 3.45]
	]
};
function paths2(withFeet: boolean): GaitPaths {
	const n = time2.length;
	const pelvis = new Float64Array(3 * n);
	const heel = { left: new Float64Array(3 * n), right: new Float64Array(3 * n) };
	const put = (a: Float64Array, i: number, along: number, side: number) => {
		a[3 * i] = along * DIR.x - side * DIR.z;
		a[3 * i + 1] = 0.05;
		a[3 * i + 2] = along * DIR.z + side * DIR.x;
	};
	for (let i = 0; i < n; i++) {
		const t = time2[i];
		put(pelvis, i, V * t, 0);
		for (const foot of ['left', 'right'] as Foot[]) {
			const landed = SPOTS[foot].filter(([ts]) => ts <= t + 1e-9).pop();
			put(heel[foot], i, landed ? landed[1] : 0, foot === 'right' ? 0.1 : -0.1);
		}
	}
	if (!withFeet) return { pelvis };
	return { pelvis, left: { heel: heel.left, toe: heel.left }, right: { heel: heel.right, toe: heel.right } };
}

describe('gait cycles', () => {
	it('cuts each foot from strike to strike with its foot off inside (hand-computed)', () => {
		const cycles = gaitCycles(events2, time2);
		expect(cycles.map((c) => [c.foot, c.start, c.end, c.off])).toEqual([
			['left', 0.7, 1.75, 1.3],
			['left', 1.75, 2.85, 2.4],
			['right', 0.2, 1.2, 0.8],
			['right', 1.2, 2.3, 1.9]
		]);
		const [l1, , r1, r2] = cycles;
		expect(r1.cycleTimeS).toBeCloseTo(1.0, 12);
		expect(r1.stanceTimeS).toBeCloseTo(0.6, 12);
		expect(r1.swingTimeS).toBeCloseTo(0.4, 12);
		expect(r1.stancePercent).toBeCloseTo(60, 10);
		expect(r2.stancePercent).toBeCloseTo((100 * 0.7) / 1.1, 10); // 63.636…
		expect(r2.swingPercent).toBeCloseTo((100 * 0.4) / 1.1, 10);
		expect(l1.stancePercent).toBeCloseTo((100 * 0.6) / 1.05, 10); // 57.142…
		expect(cycles.every((c) => c.excluded === null && c.sources.off === 'plate')).toBe(true);
	});

	it('leaves out cycles in the edge zone, cycles without exactly one foot off, and those the caller excludes', () => {
		// zone: first 25 and last 20 samples → a cycle must run within samples 25 … 280
		const zone = { startSamples: 25, endSamples: 20 };
		expect(gaitCycles(events2, time2, { edgeZone: zone }).map((c) => c.excluded)).toEqual([null, 'edge-zone', 'edge-zone', null]);
		expect(gaitCycles(events2, time2, { edgeZone: zone, includeEdgeZone: true }).map((c) => c.excluded)).toEqual([null, null, null, null]);
		expect(gaitCycles(events2, time2, { exclude: (a) => a === 120 }).map((c) => c.excluded)).toEqual([null, null, null, 'excluded']);
		const noOff = events2.filter((e) => !(e.foot === 'right' && e.sample === 80));
		expect(gaitCycles(noOff, time2).map((c) => c.excluded)).toEqual([null, null, 'no-foot-off', null]);
		const extra: GaitEvent[] = [...events2, { foot: 'right', kind: 'off', sample: 50, time: 0.5, source: 'kinematic' }];
		expect(gaitCycles(extra, time2).map((c) => c.excluded)).toEqual([null, null, 'several-foot-offs', null]);
	});

	it('normalises a series on each foot’s cycles to 101 points with mean ± SD (closed form of a ramp)', () => {
		// values = 2t + 1: on a cycle [a, b] the point at p % is 2(a + p/100·(b − a)) + 1
		const values = Float64Array.from(time2, (t) => 2 * t + 1);
		const zone = { startSamples: 25, endSamples: 20 };
		const curves = normaliseGait(time2, values, gaitCycles(events2, time2), 101);
		expect(curves.right.n).toBe(2);
		expect(curves.right.percent.length).toBe(101);
		for (const j of [0, 37, 100]) {
			const p = j / 100;
			const c1 = 2 * (0.2 + p * 1.0) + 1;
			const c2 = 2 * (1.2 + p * 1.1) + 1;
			expect(curves.right.cycles[0][j]).toBeCloseTo(c1, 9);
			expect(curves.right.cycles[1][j]).toBeCloseTo(c2, 9);
			expect(curves.right.mean[j]).toBeCloseTo((c1 + c2) / 2, 9);
			expect(curves.right.sd[j]).toBeCloseTo(Math.abs(c1 - c2) / Math.SQRT2, 9); // sample SD of two values
		}
		expect(curves.right.offPercent[0]).toBeCloseTo(60, 10);
		expect(curves.right.stancePercent.mean).toBeCloseTo(61.81818181818181, 10); // statistics.mean([60, 700/11])
		const zoned = normaliseGait(time2, values, gaitCycles(events2, time2, { edgeZone: zone }));
		expect(zoned.right.n).toBe(1);
		expect(zoned.right.sd.every((x) => Number.isNaN(x))).toBe(true);
		expect(zoned.left.n).toBe(1);
	});
});

describe('spatiotemporal parameters (hand-computed, statistics.mean / stdev)', () => {
	it('gives cadence, cycle, stance, swing and double-support times per foot', () => {
		const st = spatiotemporal(gaitCycles(events2, time2), events2, time2);
		expect(st.lengthBasis).toBeNull();
		const r = st.right;
		expect(r.n).toBe(2);
		// right cycles 1.0 s and 1.1 s
		expect(r.cycleTimeS.mean).toBeCloseTo(1.05, 12);
		expect(r.cycleTimeS.sd).toBeCloseTo(0.07071067811865482, 12);
		expect(r.cadence.mean).toBeCloseTo(114.54545454545453, 10); // 120/1.0 and 120/1.1 steps/min
		expect(r.cadence.sd).toBeCloseTo(7.713892158398709, 10);
		expect(r.stanceTimeS.mean).toBeCloseTo(0.65, 12);
		expect(r.swingTimeS.mean).toBeCloseTo(0.4, 12);
		expect(r.swingTimeS.sd).toBeCloseTo(0, 12);
		expect(r.stancePercent.sd).toBeCloseTo(2.5712973861328976, 10);
		expect(r.swingPercent.mean).toBeCloseTo(38.18181818181818, 10);
		// double support: right stance [0.2, 0.8]: left on the ground 0.2–0.3 and 0.7–0.8 → 0.2 s;
		// [1.2, 1.9]: 1.2–1.3 and 1.75–1.9 → 0.25 s
		expect(st.perCycle.filter((c) => c.foot === 'right').map((c) => c.doubleSupportS)).toEqual([
			expect.closeTo(0.2, 12),
			expect.closeTo(0.25, 12)
		]);
		expect(r.doubleSupportS.mean).toBeCloseTo(0.225, 12);
		expect(r.doubleSupportPercent.mean).toBeCloseTo(21.363636363636363, 10);
		expect(r.doubleSupportPercent.sd).toBeCloseTo(1.9284730395996745, 10);
		const l = st.left;
		// left cycles 1.05 s (stance 0.6) and 1.1 s (stance 0.65); double support 0.2 s and 0.25 s
		expect(l.stancePercent.mean).toBeCloseTo(58.116883116883116, 10);
		expect(l.stancePercent.sd).toBeCloseTo(1.3774807425711961, 10);
		expect(l.doubleSupportPercent.mean).toBeCloseTo(20.887445887445885, 10);
		expect(l.doubleSupportPercent.sd).toBeCloseTo(2.6019080693011487, 10);
		expect(Number.isNaN(l.stepLengthM.mean)).toBe(true);
	});

	it('gives double support 0 when the other foot is in the air throughout (running)', () => {
		const run: GaitEvent[] = (
			[
				['right', 'strike', 10],
				['right', 'off', 30],
				['left', 'strike', 45],
				['left', 'off', 65],
				['right', 'strike', 80],
				['right', 'off', 100],
				['left', 'strike', 115]
			] as [Foot, 'strike' | 'off', number][]
		).map(([foot, kind, sample]) => ({ foot, kind, sample, time: time2[sample], source: 'plate' }));
		const st = spatiotemporal(gaitCycles(run, time2), run, time2);
		expect(st.right.doubleSupportS.mean).toBe(0);
		expect(st.right.stancePercent.mean).toBeCloseTo((100 * 0.2) / 0.7, 10);
	});

	it('measures step and stride lengths heel to heel along the pelvis’s direction of progression', () => {
		const st = spatiotemporal(gaitCycles(events2, time2), events2, time2, paths2(true));
		expect(st.lengthBasis).toBe('heel');
		expect(st.progression!.x).toBeCloseTo(Math.cos(THETA), 12);
		const right = st.perCycle.filter((c) => c.foot === 'right');
		// right cycle 1 opens at 0.20 s: no left strike in the 1.0 s before it → NaN; cycle 2: 1.55 − 0.90 = 0.65 m
		expect(Number.isNaN(right[0].stepLengthM)).toBe(true);
		expect(right[1].stepLengthM).toBeCloseTo(0.65, 12);
		// strides 1.55 − 0.30 = 1.25 m and 2.85 − 1.55 = 1.30 m; speeds 1.25/1.0 and 1.30/1.1 m/s
		expect(st.right.strideLengthM.mean).toBeCloseTo(1.275, 12);
		expect(st.right.strideLengthM.sd).toBeCloseTo(0.03535533905932741, 12);
		expect(st.right.speedMS.mean).toBeCloseTo(1.2159090909090908, 12);
		expect(st.right.speedMS.sd).toBeCloseTo(0.04821182598999199, 12);
		expect(st.right.stepLengthM.n).toBe(1);
		// left steps 0.90 − 0.30 = 0.60 m and 2.20 − 1.55 = 0.65 m; strides 1.30 and 1.25 m
		expect(st.left.stepLengthM.mean).toBeCloseTo(0.625, 12);
		expect(st.left.stepLengthM.sd).toBeCloseTo(0.03535533905932741, 12);
		expect(st.left.speedMS.mean).toBeCloseTo(1.1872294372294372, 12);
		expect(st.left.speedMS.sd).toBeCloseTo(0.07193510544538483, 12);
	});

	it('falls back on the pelvis’s travel between the strikes without the feet’s paths', () => {
		const st = spatiotemporal(gaitCycles(events2, time2), events2, time2, paths2(false));
		expect(st.lengthBasis).toBe('pelvis');
		const right = st.perCycle.filter((c) => c.foot === 'right');
		expect(right[1].stepLengthM).toBeCloseTo(V * (1.2 - 0.7), 12); // 0.6 m
		expect(right[1].strideLengthM).toBeCloseTo(V * 1.1, 12);
		expect(right[1].speedMS).toBeCloseTo(V, 12);
	});

	it('gives no lengths when the pelvis does not progress (treadmill)', () => {
		const still = { pelvis: new Float64Array(3 * time2.length) };
		const st = spatiotemporal(gaitCycles(events2, time2), events2, time2, still);
		expect(st.lengthBasis).toBeNull();
		expect(st.progression!.moving).toBe(false);
		expect(st.right.strideLengthM.n).toBe(0);
	});
});
