// Answer types of the runs API and pages, shared by the server (src/lib/server/runs) and the components (no server imports).
import type { RunOptions } from '../processing/pipeline';
import type { EdgeZoneView } from '../processing/zone-exclusion';

export type RunState = 'queued' | 'running' | 'done' | 'failed';

/** A run's options as stored: runs made before end treatments existed name none (they used the 9-sample reflection). */
export type StoredRunOptions = Omit<RunOptions, 'endTreatment'> & Partial<Pick<RunOptions, 'endTreatment'>>;

/** One run as the API and the pages show it. */
export interface RunView {
	id: string;
	trialId: string;
	/** 1-based, in order of creation within the trial. */
	number: number;
	state: RunState;
	progress: number;
	stage: string | null;
	options: StoredRunOptions;
	error: string | null;
	attempts: number;
	createdAt: string;
	startedAt: string | null;
	finishedAt: string | null;
	rawSha256: string;
	softwareVersion: string;
	flaggedReason: string | null;
	flagDecision: string | null;
}

export const SERIES_QUANTITIES = ['angle', 'velocity', 'acceleration', 'moment', 'moment_per_kg', 'power', 'reaction_force'] as const;
export type ResultQuantity = (typeof SERIES_QUANTITIES)[number];

export interface Curve {
	name: string;
	quantity: ResultQuantity;
	unit: string;
	/** x, y or z for reaction forces (ground axes), absent for one-component series. */
	component?: 'x' | 'y' | 'z';
	/** The sign rule of the DOF (what a positive value means), from the run's model record. */
	positive: string | null;
	/** Time (s) and value; null where the value is not a number (a gap). */
	t: number[];
	v: (number | null)[];
}

/** GET …/runs/[rid]/series */
export interface SeriesAnswer {
	runId: string;
	quantity: ResultQuantity;
	/** Samples per curve before reduction. */
	samples: number;
	/** Points asked for (null: every sample). */
	points: number | null;
	curves: Curve[];
	bodyMassKg: number | null;
	/** Where the run's results are not reliable near its ends (computed: false, all zero, for runs made before edge zones). */
	edgeZone: EdgeZoneView;
}

/** One row of a run's summary as pages and the API show it: the figures of the chosen scope (null: no samples). */
export interface SummaryView {
	dof: string;
	quantity: string;
	unit: string;
	peakPositive: number | null;
	peakPositiveTime: number | null;
	peakNegative: number | null;
	peakNegativeTime: number | null;
	range: number | null;
	mean: number | null;
	/** Samples the figures are taken over (null for runs stored before this was recorded). */
	samples: number | null;
}

/** GET …/runs/[rid]/summary */
export interface SummaryAnswer {
	runId: string;
	convention: string;
	bodyMassKg: number | null;
	edgeZone: EdgeZoneView;
	edgeZonesIncluded: boolean;
	scope: string;
	summary: SummaryView[];
}

/** Residual analysis of one channel of a trial. */
export interface ChannelResidual {
	channel: string;
	cutoffs: number[];
	residuals: number[];
	suggestedHz: number | null;
	noiseLine: { slope: number; intercept: number } | null;
	/** Why no suggestion could be made for this channel. */
	problem: string | null;
}

export interface TrialResiduals {
	sampleHz: number;
	channels: ChannelResidual[];
}

/** A participant's run flagged after a consent withdrawal, awaiting (or with) the PI's decision. */
export type FlagDecision = 'keep' | 'exclude';

export interface FlaggedRun {
	id: string;
	state: string;
	createdAt: string;
	fileName: string;
	sessionId: string;
	sessionOn: string;
	reason: string;
	decision: FlagDecision | null;
	decidedAt: string | null;
	decidedBy: string | null;
}
