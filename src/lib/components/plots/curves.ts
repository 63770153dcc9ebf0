// Shapes of result curves as the API and the pages hand them to plots (no server imports).
import type { EdgeZoneView } from '../../processing/zone-exclusion';

export interface PlotCurve {
	name: string;
	quantity: string;
	unit: string;
	component?: 'x' | 'y' | 'z';
	/** What a positive value means for this DOF (its sign rule). */
	positive: string | null;
	t: number[];
	v: (number | null)[];
}

export interface PlotSeries {
	runId: string;
	samples: number;
	curves: PlotCurve[];
	bodyMassKg: number | null;
	/** Where the run's results are not reliable near its ends (absent or computed: false: not known). */
	edgeZone?: EdgeZoneView;
}

/** "right.shoulder.internalRotation" → "right shoulder internal rotation". */
export const dofWords = (name: string): string => name.replace(/[._]/g, ' ').replace(/([a-z])([A-Z])/g, (_, a: string, b: string) => `${a} ${b.toLowerCase()}`);

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
