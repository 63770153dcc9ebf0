// Shapes of result curves as the API and the pages hand them to plots (no server imports).
import type { EdgeZoneView } from '../../processing/zone-exclusion';
import type { Curve, SeriesAnswer } from '../../types/runs';

/** A curve as plots draw it: a run's curve (SeriesAnswer) of any quantity. */
export type PlotCurve = Omit<Curve, 'quantity'> & { quantity: string };

/** The curves of one run as plots take them (a SeriesAnswer; the edge zone absent or computed: false when not known). */
export type PlotSeries = Pick<SeriesAnswer, 'runId' | 'samples' | 'bodyMassKg'> & { curves: PlotCurve[]; edgeZone?: EdgeZoneView };

/** "right.shoulder.internalRotation" → "right shoulder internal rotation". */
export const dofWords = (name: string): string =>
	name.replace(/[._]/g, ' ').replace(/([a-z])([A-Z])/g, (_, a: string, b: string) => `${a} ${b.toLowerCase()}`);

/** "right.knee.flexion" → "Right knee flexion" (as a title). */
export function dofLabel(name: string): string {
	const words = dofWords(name);
	return words.charAt(0).toUpperCase() + words.slice(1);
}

/** Smallest and largest finite value of a curve (null when it has none). */
export function finiteExtent(v: (number | null)[]): [number, number] | null {
	let lo = Infinity;
	let hi = -Infinity;
	for (const x of v) {
		if (x === null || !Number.isFinite(x)) continue;
		if (x < lo) lo = x;
		if (x > hi) hi = x;
	}
	return lo <= hi ? [lo, hi] : null;
}

/**
 * A plot's value domain that keeps zero in view (the sign is what a reader checks first): the extent stretched to
 * include 0, then widened by padFraction of its span at each end (of 1 when the span is 0).
 */
export function zeroSpanningDomain(ext: [number, number], padFraction: number): [number, number] {
	const lo = Math.min(0, ext[0]);
	const hi = Math.max(0, ext[1]);
	const pad = (hi - lo || 1) * padFraction;
	return [lo - pad, hi + pad];
}
