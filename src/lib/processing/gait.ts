// Gait events, gait cycles and spatiotemporal parameters. Pure TypeScript, no I/O; every series is at the angle
// rate, time in seconds, positions in metres in lab axes (X anterior, Y up, Z right), interleaved x, y, z per sample.
//
// Conventions
//   - A contact covers samples start .. end − 1: `start` is the first sample at or above the threshold, `end` (exclusive)
//     the first sample below it again (end = the number of samples when the contact runs to the end of the recording).
//   - Foot strike of a plate contact is at sample `start` when start > 0 (a sample below the threshold precedes it); foot
//     off is at sample `end` when end < n (the first sample below). A contact already under way when the recording starts
//     has no strike, one still under way when it ends has no foot off. An event's time is time[sample].
//   - Kinematic events (Zeni, Richards & Higginson 2008, see kinematicEvents): foot strike at the maxima of the heel's distance
//     ahead of the pelvis along the direction of progression, foot off at the minima of the toe's.
//   - Merging: plate events win; a kinematic event of a foot is dropped when it falls within `windowS` of a plate contact of
//     that foot (from its start − windowS to its end + windowS).
//   - A cycle runs from one foot strike to the next of the same foot and needs exactly one foot off of that foot inside;
//     stance = strike → off, swing = off → next strike.
//   - Means ± SD are the sample SD (n − 1), NaN left out (meanSdOf of cycles.ts).
import { detectPeaks, meanSd, meanSdOf, normaliseCycles } from './cycles';
import type { ZoneSamples } from './zone-exclusion';

export type Foot = 'left' | 'right';
export const FEET: readonly Foot[] = ['left', 'right'];
export type GaitEventKind = 'strike' | 'off';
/** Where an event comes from: a plate's threshold crossing or the feet's kinematics (heel/toe ahead of the pelvis). */
export type GaitEventSource = 'plate' | 'kinematic';

export interface GaitEvent {
	foot: Foot;
	kind: GaitEventKind;
	/** s, = time[sample] */
	time: number;
	/** index at the angle rate */
	sample: number;
	source: GaitEventSource;
}

/**
 * A plate contact assigned to a foot; samples start .. end − 1 are loaded (end exclusive, see the top of the file): a
 * contact of forces/contacts.ts (findContacts, last loaded sample inclusive) with end + 1.
 */
export interface PlateContact {
	plate: string;
	foot: Foot;
	start: number;
	end: number;
}

/** Positions of two points of one foot per sample (m, lab axes, interleaved x, y, z). */
export interface FootPath {
	/** the ankle joint centre, standing in for the heel */
	heel: ArrayLike<number>;
	/** the distal end of the foot */
	toe: ArrayLike<number>;
}

/** The pelvis path (midpoint of the hip joint centres, interleaved x, y, z, m) and the feet's paths where known. */
export interface GaitPaths {
	pelvis: ArrayLike<number>;
	left?: FootPath;
	right?: FootPath;
}

/** Bad input to the gait functions; the message names the argument, the entry and the field. */
export class GaitError extends RangeError {
	constructor(message: string) {
		super(message);
		this.name = 'GaitError';
	}
}

function checkTime(time: ArrayLike<number>): void {
	for (let i = 0; i < time.length; i++) {
		if (!Number.isFinite(time[i])) throw new GaitError(`time[${i}] is not a finite number of seconds.`);
		if (i > 0 && !(time[i] > time[i - 1])) throw new GaitError(`time must be strictly increasing (time[${i}] ≤ time[${i - 1}]).`);
	}
}

function checkPath(name: string, path: ArrayLike<number>, n: number): void {
	if (path.length !== 3 * n) throw new GaitError(`${name} has ${path.length} values; expected 3 per sample (x, y, z) = ${3 * n}.`);
}

// ---------------------------------------------------------------------------------------------------------------
// 1. Plate events

/** Foot strike and foot off of each contact (see the top of the file), in time order. */
export function plateEvents(contacts: readonly PlateContact[], time: ArrayLike<number>): GaitEvent[] {
	const n = time.length;
	const out: GaitEvent[] = [];
	contacts.forEach((c, k) => {
		const where = `contacts[${k}] (${c.plate}, ${c.foot})`;
		if (c.foot !== 'left' && c.foot !== 'right') throw new GaitError(`${where}: foot must be 'left' or 'right'.`);
		if (!Number.isInteger(c.start) || !Number.isInteger(c.end) || c.start < 0 || c.end > n || c.start >= c.end)
			throw new GaitError(`${where}: start ${c.start} and end ${c.end} must be whole sample numbers with 0 ≤ start < end ≤ ${n}.`);
		if (c.start > 0) out.push({ foot: c.foot, kind: 'strike', time: time[c.start], sample: c.start, source: 'plate' });
		if (c.end < n) out.push({ foot: c.foot, kind: 'off', time: time[c.end], sample: c.end, source: 'plate' });
	});
	return sortEvents(out);
}

function sortEvents(events: GaitEvent[]): GaitEvent[] {
	return events.sort((a, b) => a.sample - b.sample || (a.foot < b.foot ? -1 : a.foot > b.foot ? 1 : 0) || (a.kind < b.kind ? -1 : 1));
}

// ---------------------------------------------------------------------------------------------------------------
// 2. Kinematic events

/** Horizontal direction of progression: the pelvis's mean horizontal velocity, as a unit vector in the X–Z plane. */
export interface Progression {
	x: number;
	z: number;
	/** horizontal distance between the first and last finite pelvis positions (m) */
	travelledM: number;
	/** false when the pelvis travelled less than MIN_TRAVEL_M (treadmill, on the spot): then the direction is lab +X */
	moving: boolean;
}

/** Below this horizontal travel (m) the pelvis is taken as not progressing; our choice. */
export const MIN_TRAVEL_M = 0.05;

/** The pelvis's mean direction of progression (first to last finite position, horizontal part). */
export function progressionDirection(pelvis: ArrayLike<number>): Progression {
	const n = Math.floor(pelvis.length / 3);
	const finite = (i: number) => Number.isFinite(pelvis[3 * i]) && Number.isFinite(pelvis[3 * i + 2]);
	let a = 0;
	while (a < n && !finite(a)) a++;
	let b = n - 1;
	while (b > a && !finite(b)) b--;
	if (a >= b) return { x: 1, z: 0, travelledM: 0, moving: false };
	const dx = pelvis[3 * b] - pelvis[3 * a];
	const dz = pelvis[3 * b + 2] - pelvis[3 * a + 2];
	const travelledM = Math.hypot(dx, dz);
	if (!(travelledM >= MIN_TRAVEL_M)) return { x: 1, z: 0, travelledM, moving: false };
	return { x: dx / travelledM, z: dz / travelledM, travelledM, moving: true };
}

export interface KinematicEventOptions {
	/** shortest time between two strikes (or two offs) of one foot, s; default 0.3 (our choice: above 200 steps/min) */
	minIntervalS?: number;
	/** smallest prominence of an extremum of the heel or toe distance, m; default 0.05 (our choice) */
	minProminenceM?: number;
}

/** Distance of a point ahead of the pelvis along the direction of progression, per sample. */
function aheadOfPelvis(point: ArrayLike<number>, pelvis: ArrayLike<number>, d: Progression, sign = 1): Float64Array {
	const n = pelvis.length / 3;
	const out = new Float64Array(n);
	for (let i = 0; i < n; i++) out[i] = sign * ((point[3 * i] - pelvis[3 * i]) * d.x + (point[3 * i + 2] - pelvis[3 * i + 2]) * d.z);
	return out;
}

/**
 * Foot strikes and foot offs from the feet's paths (Zeni, Richards & Higginson 2008, Gait & Posture 27: 710–714, from
 * memory): foot strike at each maximum of the heel's distance ahead of the pelvis along the direction of progression,
 * foot off at each minimum of the toe's. The extrema are found by detectPeaks of cycles.ts (prominence, then the
 * minimum interval). Feet without a path give no events.
 */
export function kinematicEvents(time: ArrayLike<number>, paths: GaitPaths, opts: KinematicEventOptions = {}): GaitEvent[] {
	checkTime(time);
	const n = time.length;
	checkPath('paths.pelvis', paths.pelvis, n);
	const minIntervalS = opts.minIntervalS ?? 0.3;
	const minProminenceM = opts.minProminenceM ?? 0.05;
	if (!(minIntervalS >= 0)) throw new GaitError(`minIntervalS must be 0 s or more (got ${minIntervalS}).`);
	if (!(minProminenceM >= 0)) throw new GaitError(`minProminenceM must be 0 m or more (got ${minProminenceM}).`);
	const d = progressionDirection(paths.pelvis);
	const out: GaitEvent[] = [];
	for (const foot of FEET) {
		const p = paths[foot];
		if (!p) continue;
		checkPath(`paths.${foot}.heel`, p.heel, n);
		checkPath(`paths.${foot}.toe`, p.toe, n);
		const peaks = { minProminence: minProminenceM, minDistanceS: minIntervalS };
		for (const { index: i } of detectPeaks(aheadOfPelvis(p.heel, paths.pelvis, d), time, peaks))
			out.push({ foot, kind: 'strike', time: time[i], sample: i, source: 'kinematic' });
		for (const { index: i } of detectPeaks(aheadOfPelvis(p.toe, paths.pelvis, d, -1), time, peaks))
			out.push({ foot, kind: 'off', time: time[i], sample: i, source: 'kinematic' });
	}
	return sortEvents(out);
}

/** Default margin around a plate contact inside which kinematic events of that foot are dropped (s); our choice. */
export const MERGE_WINDOW_S = 0.1;

/**
 * Plate events win: every plate event is kept; a kinematic event of a foot is dropped when its time lies within
 * [time[start] − windowS, time[end − 1] + windowS] of a contact of the same foot. Result in time order.
 */
export function mergeEvents(
	plate: readonly GaitEvent[],
	kinematic: readonly GaitEvent[],
	contacts: readonly PlateContact[],
	time: ArrayLike<number>,
	windowS = MERGE_WINDOW_S
): GaitEvent[] {
	if (!(windowS >= 0)) throw new GaitError(`windowS must be 0 s or more (got ${windowS}).`);
	const spans = contacts.map((c) => ({ foot: c.foot, from: time[c.start] - windowS, to: time[c.end - 1] + windowS }));
	const kept = kinematic.filter((e) => !spans.some((s) => s.foot === e.foot && e.time >= s.from && e.time <= s.to));
	return sortEvents([...plate, ...kept]);
}

export interface GaitEventInput {
	time: ArrayLike<number>;
	/** plate contacts assigned to a foot (only those to be used: leave out shared or off-edge contacts) */
	contacts?: readonly PlateContact[];
	/** foot and pelvis paths; without them only plate events are found */
	paths?: GaitPaths;
}

/** Plate events, filled in by kinematic events where a foot is off the plates (see mergeEvents). */
export function gaitEvents(input: GaitEventInput, opts: KinematicEventOptions & { windowS?: number } = {}): GaitEvent[] {
	checkTime(input.time);
	const contacts = input.contacts ?? [];
	const plate = plateEvents(contacts, input.time);
	if (!input.paths) return plate;
	return mergeEvents(plate, kinematicEvents(input.time, input.paths, opts), contacts, input.time, opts.windowS);
}

// ---------------------------------------------------------------------------------------------------------------
// 3. Cycles

/** Why a cycle is left out of means and normalised curves; null when it is used. */
export type CycleExclusion = 'no-foot-off' | 'several-foot-offs' | 'edge-zone' | 'excluded';

export const CYCLE_EXCLUSION_TEXT: Record<CycleExclusion, string> = {
	'no-foot-off': 'no foot off of this foot between its two foot strikes',
	'several-foot-offs': 'more than one foot off between its two foot strikes (an event is missing)',
	'edge-zone': 'it reaches into the edge zone',
	excluded: 'left out by the caller'
};

export interface GaitCycle {
	foot: Foot;
	/** foot strike opening the cycle and the next foot strike of the same foot */
	start: number;
	end: number;
	startSample: number;
	endSample: number;
	/** the foot off inside (NaN when there is none or several) */
	off: number;
	offSample: number;
	sources: { start: GaitEventSource; off: GaitEventSource | null; end: GaitEventSource };
	cycleTimeS: number;
	stanceTimeS: number;
	swingTimeS: number;
	/** stance as % of the cycle = where the foot off lies on 0–100 % */
	stancePercent: number;
	swingPercent: number;
	excluded: CycleExclusion | null;
}

export interface CycleOptions {
	/** samples [0, startSamples) and [n − endSamples, n) form the edge zone */
	edgeZone?: ZoneSamples;
	/** keep cycles that reach into the edge zone (default false: they are left out) */
	includeEdgeZone?: boolean;
	/** any further rule: true leaves the cycle out */
	exclude?: (startSample: number, endSample: number) => boolean;
}

/** Every cycle of each foot (left first, each in time order), with the reason when it is left out. */
export function gaitCycles(events: readonly GaitEvent[], time: ArrayLike<number>, opts: CycleOptions = {}): GaitCycle[] {
	const n = time.length;
	events.forEach((e, k) => {
		if (!Number.isInteger(e.sample) || e.sample < 0 || e.sample >= n)
			throw new GaitError(`events[${k}] (${e.foot} ${e.kind}): sample ${e.sample} is not a sample of the recording (0 to ${n - 1}).`);
	});
	const out: GaitCycle[] = [];
	for (const foot of FEET) {
		const mine = events.filter((e) => e.foot === foot).sort((a, b) => a.sample - b.sample);
		const strikes = mine.filter((e) => e.kind === 'strike');
		for (let k = 0; k + 1 < strikes.length; k++) {
			const a = strikes[k];
			const b = strikes[k + 1];
			if (b.sample === a.sample) continue;
			const offs = mine.filter((e) => e.kind === 'off' && e.sample > a.sample && e.sample < b.sample);
			const off = offs.length === 1 ? offs[0] : null;
			const start = time[a.sample];
			const end = time[b.sample];
			const offT = off ? time[off.sample] : Number.NaN;
			const cycleTimeS = end - start;
			let excluded: CycleExclusion | null = offs.length === 0 ? 'no-foot-off' : offs.length > 1 ? 'several-foot-offs' : null;
			const zone = opts.edgeZone;
			if (!excluded && zone && !opts.includeEdgeZone && (a.sample < zone.startSamples || b.sample > n - 1 - zone.endSamples))
				excluded = 'edge-zone';
			if (!excluded && opts.exclude?.(a.sample, b.sample)) excluded = 'excluded';
			out.push({
				foot,
				start,
				end,
				startSample: a.sample,
				endSample: b.sample,
				off: offT,
				offSample: off ? off.sample : Number.NaN,
				sources: { start: a.source, off: off ? off.source : null, end: b.source },
				cycleTimeS,
				stanceTimeS: offT - start,
				swingTimeS: end - offT,
				stancePercent: (100 * (offT - start)) / cycleTimeS,
				swingPercent: (100 * (end - offT)) / cycleTimeS,
				excluded
			});
		}
	}
	return out;
}

export interface Stat {
	mean: number;
	sd: number;
	n: number;
}

export interface FootCurves {
	foot: Foot;
	/** 0, 1, …, 100 % for 101 points */
	percent: number[];
	/** one normalised curve per used cycle, in time order */
	cycles: number[][];
	mean: number[];
	sd: number[];
	/** number of used cycles */
	n: number;
	/** where each used cycle's foot off lies (% of the cycle): the stance/swing boundary to mark */
	offPercent: number[];
	stancePercent: Stat;
}

/**
 * One series (e.g. a joint angle or moment at the angle rate) cut into each foot's used cycles, normalised to 0–100 %
 * in `points` points (normaliseCycles of cycles.ts: linear interpolation, NaN next to a gap), with the mean ± SD.
 */
export function normaliseGait(
	time: Float64Array,
	values: Float64Array,
	cycles: readonly GaitCycle[],
	points = 101
): Record<Foot, FootCurves> {
	const result = {} as Record<Foot, FootCurves>;
	for (const foot of FEET) {
		const used = cycles.filter((c) => c.foot === foot && !c.excluded);
		const curves = used.map((c) => normaliseCycles(time, values, [c.start, c.end], points).cycles[0]);
		const percent = Array.from({ length: points }, (_, j) => (100 * j) / (points - 1));
		const { mean, sd } = curves.length ? meanSd(curves) : { mean: percent.map(() => Number.NaN), sd: percent.map(() => Number.NaN) };
		const offPercent = used.map((c) => c.stancePercent);
		result[foot] = { foot, percent, cycles: curves, mean, sd, n: used.length, offPercent, stancePercent: meanSdOf(offPercent) };
	}
	return result;
}

// ---------------------------------------------------------------------------------------------------------------
// 4. Spatiotemporal parameters

/** Values of one used cycle. */
export interface CycleSpatiotemporal {
	foot: Foot;
	startSample: number;
	endSample: number;
	/** steps per minute: two steps per cycle, 120 / cycle time */
	cadence: number;
	cycleTimeS: number;
	stanceTimeS: number;
	swingTimeS: number;
	stancePercent: number;
	swingPercent: number;
	/** time within this foot's stance during which the other foot is on the ground too (NaN when unknown) */
	doubleSupportS: number;
	doubleSupportPercent: number;
	/** the step ending with this cycle's opening strike (from the other foot's last strike before it), m */
	stepLengthM: number;
	/** from this cycle's opening strike to its closing one, m */
	strideLengthM: number;
	/** stride length / cycle time, m/s */
	speedMS: number;
}

export interface FootSpatiotemporal {
	/** number of used cycles */
	n: number;
	cadence: Stat;
	cycleTimeS: Stat;
	stanceTimeS: Stat;
	swingTimeS: Stat;
	stancePercent: Stat;
	swingPercent: Stat;
	doubleSupportS: Stat;
	doubleSupportPercent: Stat;
	stepLengthM: Stat;
	strideLengthM: Stat;
	speedMS: Stat;
}

/**
 * How lengths were measured: 'heel' = between the heel points (ankle joint centres) at the two strikes, along the
 * pelvis's mean direction of progression; 'pelvis' = the pelvis's travel along that direction between the two strikes
 * (when the feet's paths are not given); null = no lengths (no pelvis path, or the pelvis did not progress).
 */
export type LengthBasis = 'heel' | 'pelvis' | null;

export interface Spatiotemporal {
	left: FootSpatiotemporal;
	right: FootSpatiotemporal;
	perCycle: CycleSpatiotemporal[];
	lengthBasis: LengthBasis;
	progression: Progression | null;
}

const other = (f: Foot): Foot => (f === 'left' ? 'right' : 'left');

/**
 * Time during [from, to] in which a foot is on the ground, from its events in time order; the state before its first
 * event after `from` is inferred from that event (an off means it was on the ground). NaN when it has no event after
 * `from`.
 */
function groundTime(events: readonly GaitEvent[], from: number, to: number): number {
	const next = events.findIndex((e) => e.time > from);
	if (next < 0) return Number.NaN;
	let on = events[next].kind === 'off';
	let t = from;
	let sum = 0;
	for (let k = next; k < events.length && events[k].time < to; k++) {
		const e = events[k];
		if (on) sum += e.time - t;
		t = e.time;
		on = e.kind === 'strike';
	}
	if (on) sum += to - t;
	return sum;
}

/** Spatiotemporal parameters of each used cycle and their mean ± SD per foot (see CycleSpatiotemporal and LengthBasis). */
export function spatiotemporal(
	cycles: readonly GaitCycle[],
	events: readonly GaitEvent[],
	time: ArrayLike<number>,
	paths?: GaitPaths
): Spatiotemporal {
	const n = time.length;
	let progression: Progression | null = null;
	let lengthBasis: LengthBasis = null;
	if (paths) {
		checkPath('paths.pelvis', paths.pelvis, n);
		progression = progressionDirection(paths.pelvis);
		if (progression.moving) lengthBasis = paths.left && paths.right ? 'heel' : 'pelvis';
		if (lengthBasis === 'heel') for (const f of FEET) checkPath(`paths.${f}.heel`, paths[f]!.heel, n);
	}
	const along = (path: ArrayLike<number>, i: number) => path[3 * i] * progression!.x + path[3 * i + 2] * progression!.z;
	const point = (f: Foot): ArrayLike<number> => (lengthBasis === 'heel' ? paths![f]!.heel : paths!.pelvis);
	const byFoot = { left: [] as GaitEvent[], right: [] as GaitEvent[] };
	for (const e of [...events].sort((a, b) => a.sample - b.sample)) byFoot[e.foot].push(e);

	const perCycle: CycleSpatiotemporal[] = [];
	for (const c of cycles) {
		if (c.excluded) continue;
		const opp = byFoot[other(c.foot)];
		const doubleSupportS = groundTime(opp, c.start, c.off);
		let stepLengthM = Number.NaN;
		let strideLengthM = Number.NaN;
		if (lengthBasis) {
			const prev = opp.filter((e) => e.kind === 'strike' && e.sample < c.startSample && e.time > c.start - c.cycleTimeS).pop();
			if (prev) stepLengthM = along(point(c.foot), c.startSample) - along(point(other(c.foot)), prev.sample);
			strideLengthM = along(point(c.foot), c.endSample) - along(point(c.foot), c.startSample);
		}
		perCycle.push({
			foot: c.foot,
			startSample: c.startSample,
			endSample: c.endSample,
			cadence: 120 / c.cycleTimeS,
			cycleTimeS: c.cycleTimeS,
			stanceTimeS: c.stanceTimeS,
			swingTimeS: c.swingTimeS,
			stancePercent: c.stancePercent,
			swingPercent: c.swingPercent,
			doubleSupportS,
			doubleSupportPercent: (100 * doubleSupportS) / c.cycleTimeS,
			stepLengthM,
			strideLengthM,
			speedMS: strideLengthM / c.cycleTimeS
		});
	}
	const summary = (foot: Foot): FootSpatiotemporal => {
		const mine = perCycle.filter((c) => c.foot === foot);
		const stat = (k: keyof Omit<CycleSpatiotemporal, 'foot'>) => meanSdOf(mine.map((c) => c[k]));
		return {
			n: mine.length,
			cadence: stat('cadence'),
			cycleTimeS: stat('cycleTimeS'),
			stanceTimeS: stat('stanceTimeS'),
			swingTimeS: stat('swingTimeS'),
			stancePercent: stat('stancePercent'),
			swingPercent: stat('swingPercent'),
			doubleSupportS: stat('doubleSupportS'),
			doubleSupportPercent: stat('doubleSupportPercent'),
			stepLengthM: stat('stepLengthM'),
			strideLengthM: stat('strideLengthM'),
			speedMS: stat('speedMS')
		};
	};
	return { left: summary('left'), right: summary('right'), perCycle, lengthBasis, progression };
}
