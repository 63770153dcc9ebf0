// Leaving a run's edge zone out: which samples, times and repetitions lie inside it, and the stored zone as the
// pages and the API show it (runs computed before edge zones existed have none: treated as zero). Pure, no I/O.
import type { EdgeZone } from './pipeline';

/** What deciding "inside or outside" needs: samples [0, startSamples) and [n − endSamples, n) are inside. */
export interface ZoneSamples {
	startSamples: number;
	endSamples: number;
}

/** A stored edge zone as shown and exported; `computed: false` for a run made before edge zones (then all zero). */
export interface EdgeZoneView extends EdgeZone {
	computed: boolean;
}

/** The words shown wherever a run has no stored edge zone. */
export const EDGE_ZONE_NOT_COMPUTED = 'not computed (run before edge zones were introduced)';

/** Why the zone exists, in one sentence for tooltips and captions. */
export const EDGE_ZONE_WHY =
	'near the ends of a trial the filter’s start-up and the end formulas of the derivatives make filtered angles, their derivatives and hence joint moments unreliable';

/** Common practice, said next to the plots. */
export const EXTRA_FRAMES_ADVICE =
	'Recording extra frames before and after the movement of interest is common practice, so that the edge zones fall outside it.';

const count = (x: unknown) => (typeof x === 'number' && Number.isInteger(x) && x >= 0 ? x : 0);
const seconds = (x: unknown) => (typeof x === 'number' && Number.isFinite(x) && x >= 0 ? x : 0);

/** The view of a run's stored edge zone (the runs.edge_zone column; null or malformed = not computed, zero). */
export function edgeZoneView(stored: unknown): EdgeZoneView {
	if (!stored || typeof stored !== 'object')
		return { computed: false, startSeconds: 0, endSeconds: 0, startSamples: 0, endSamples: 0, basis: EDGE_ZONE_NOT_COMPUTED };
	const z = stored as Record<string, unknown>;
	return {
		computed: true,
		startSeconds: seconds(z.startSeconds),
		endSeconds: seconds(z.endSeconds),
		startSamples: count(z.startSamples),
		endSamples: count(z.endSamples),
		basis: typeof z.basis === 'string' ? z.basis : ''
	};
}

/** Whether sample k of n lies inside the zone. */
export function inEdgeZone(k: number, n: number, zone: ZoneSamples): boolean {
	return k < zone.startSamples || k >= n - zone.endSamples;
}

/** First and last index of the samples outside the zone, or null when the zone covers every sample. */
export function reliableRange(n: number, zone: ZoneSamples): { first: number; last: number } | null {
	const first = Math.max(0, zone.startSamples);
	const last = n - 1 - Math.max(0, zone.endSamples);
	return first <= last ? { first, last } : null;
}

/** The time span from the first to the last sample outside the zone (s), or null when there is none. */
export function reliableSpan(time: ArrayLike<number>, zone: ZoneSamples): { from: number; to: number } | null {
	const r = reliableRange(time.length, zone);
	return r ? { from: time[r.first], to: time[r.last] } : null;
}

/**
 * Whether each repetition (events[k] .. events[k + 1]) overlaps the zone: it does unless it starts at or after the
 * first sample outside the zone and ends at or before the last one (then no value of it, interpolated or not, uses a
 * sample inside the zone). With no sample outside the zone every repetition overlaps it.
 */
export function repetitionsInEdgeZone(time: ArrayLike<number>, events: number[], zone: ZoneSamples): boolean[] {
	const span = reliableSpan(time, zone);
	const out: boolean[] = [];
	for (let k = 0; k + 1 < events.length; k++) out.push(!span || events[k] < span.from || events[k + 1] > span.to);
	return out;
}

/** Whether a time (s) lies inside the zone: before the first or after the last sample outside it. */
export function timeInEdgeZone(t: number, span: { from: number; to: number } | null): boolean {
	return !span || t < span.from || t > span.to;
}

export interface ZoneBand {
	end: 'start' | 'end';
	/** Time span of the band (s). */
	from: number;
	to: number;
	seconds: number;
	samples: number;
}

/**
 * The shaded bands of a zone on a time axis running from `first` to `last` (s): from the first sample to the first
 * sample outside the zone, and from the last sample outside it to the last sample. Empty bands are left out.
 */
export function zoneBands(first: number, last: number, zone: EdgeZoneView): ZoneBand[] {
	const bands: ZoneBand[] = [];
	if (zone.startSeconds > 0 && zone.startSamples > 0)
		bands.push({
			end: 'start',
			from: first,
			to: Math.min(last, first + zone.startSeconds),
			seconds: zone.startSeconds,
			samples: zone.startSamples
		});
	if (zone.endSeconds > 0 && zone.endSamples > 0)
		bands.push({ end: 'end', from: Math.max(first, last - zone.endSeconds), to: last, seconds: zone.endSeconds, samples: zone.endSamples });
	return bands;
}

const s3 = (x: number) => Number(x.toPrecision(3)).toString();

/** e.g. "edge zone: first 0.125 s (25 samples) and last 0.125 s (25 samples)"; or the not-computed words. */
export function edgeZoneWords(zone: EdgeZoneView): string {
	if (!zone.computed) return `edge zone: ${EDGE_ZONE_NOT_COMPUTED}`;
	if (!zone.startSamples && !zone.endSamples) return 'edge zone: none (every sample is reliable)';
	const part = (s: number, n: number) => `${s3(s)} s (${n} sample${n === 1 ? '' : 's'})`;
	return `edge zone: first ${part(zone.startSeconds, zone.startSamples)} and last ${part(zone.endSeconds, zone.endSamples)}`;
}

/** The tooltip of one shaded band. */
export function bandTitle(band: ZoneBand, who = ''): string {
	return `Edge zone${who ? ` of ${who}` : ''}: the ${band.end === 'start' ? 'first' : 'last'} ${s3(band.seconds)} s (${band.samples} sample${band.samples === 1 ? '' : 's'}); results are not reliable here because ${EDGE_ZONE_WHY}. Left out of peaks, means and repetitions unless “Include edge zones” is ticked.`;
}
