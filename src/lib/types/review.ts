// Answer types of the review and comparison API and pages, shared by the server (src/lib/server/review) and the
// components (no server imports).
import type { EdgeZoneView } from '../processing/zone-exclusion';
import type { ResultQuantity } from './runs';

export interface ReviewCurve {
	name: string;
	unit: string;
	positive: string | null;
	/** Every sample (6 significant digits; null = gap), for the read-out and the CSV. */
	v: (number | null)[];
	/** Indices into t / v of the points drawn: LTTB plus every bucket's min and max (src/lib/processing/reduce.ts). */
	drawn: number[];
}

/** A run's cycle events: the times (s) that cut it into repetitions, and how they were found. */
export interface EventSet {
	times: number[];
	source: 'manual' | 'peaks' | 'threshold';
	rule: Record<string, unknown> | null;
	updatedAt: string;
}

export interface ReviewRun {
	runId: string;
	trialId: string;
	fileName: string;
	runNumber: number;
	/** The newest done run of its trial (shown by default). */
	latest: boolean;
	participantCode: string;
	sessionOn: string;
	bodyMassKg: number | null;
	samples: number;
	/** Time of every sample (s, to the microsecond). */
	t: number[];
	curves: ReviewCurve[];
	events: EventSet | null;
	/** Where the run's results are not reliable near its ends (computed: false, all zero, for runs made before edge zones). */
	edgeZone: EdgeZoneView;
}

/** GET …/sessions/[sid]/review */
export interface ReviewAnswer {
	quantity: ResultQuantity;
	convention: string;
	maxPoints: number;
	runs: ReviewRun[];
}

export const COMPARE_QUANTITIES = ['moment', 'moment_per_kg', 'angle', 'power'] as const satisfies readonly ResultQuantity[];
export type CompareQuantity = (typeof COMPARE_QUANTITIES)[number];

export interface CompareGroup {
	label: string;
	/** Runs used, cycles pooled, and how each run was time-normalised. */
	runs: number;
	cycles: number;
	byEvents: number;
	wholeTrials: number;
	/** Repetitions left out because they overlap an edge zone (0 when edge zones are included). */
	leftOut: number;
	/** Whole trials normalised without their edge zones (0 when edge zones are included). */
	trimmed: number;
	dofs: {
		name: string;
		unit: string;
		positive: string | null;
		mean: (number | null)[];
		sd: (number | null)[];
		n: number;
		peakMax: { mean: number | null; sd: number | null };
		peakMin: { mean: number | null; sd: number | null };
	}[];
}
