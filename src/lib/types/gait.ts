// Answer types of a run's ground reaction forces and gait results (GET /api/studies/:id/runs/:rid/gait), shared by
// the server (src/lib/server/runs/gait-results.ts) and the components that plot them (no server imports).
//
// Axes and units: lab axes (X anterior, Y up, Z right), SI units. Times in seconds on the run's time axis; samples are
// indices at the angle rate (0-based). Numbers are rounded to 6 significant digits; null stands for a value that is
// not defined (a CoP where the plate is unloaded, a figure with no cycle to compute it from).

// the foot, event and cycle-exclusion types are gait.ts's own (type-only: nothing of processing reaches the page)
import type { CycleExclusion, Foot, GaitEventKind, GaitEventSource } from '../processing/gait';
export type { Foot, GaitEventKind, GaitEventSource };

/** The geometry of a plate as the run used it (copied into the run's model record: plates may be edited later). */
export interface GaitPlateView {
	name: string;
	/** Top-surface corners in lab axes (m), going round the plate. */
	corners: [number, number, number][];
	/** R_plate→lab, row-major (column k = plate axis k in lab axes). */
	axes: [number, number, number][];
	originDepthM: number;
	output: 'forces-cop' | 'forces-moments';
}

/** One plate's loads on the person at the angle rate (after low-pass filtering and resampling). */
export interface GrfSeries {
	plate: string;
	/** Ground reaction force on the person, lab axes (N), one value per sample of `GaitAnswer.t`. */
	x: number[];
	y: number[];
	z: number[];
	/** The same three components as % of body weight (100 · F / (m g)); null when the run has no body mass. */
	percentBodyWeight: { x: number[]; y: number[]; z: number[] } | null;
	/** Free moment on the person about the plate's normal, as a lab vector (N·m); 0 where unloaded. */
	freeMoment: { x: number[]; y: number[]; z: number[] };
}

/** One plate's centre-of-pressure path on its top surface (lab axes, m); null where the plate is unloaded. */
export interface CopPath {
	plate: string;
	x: (number | null)[];
	y: (number | null)[];
	z: (number | null)[];
}

/** One loaded interval of a plate (normal force at or above the contact threshold). */
export interface ContactView {
	/** `<plate>#<k>`: the plate's name and the contact's number on it (0-based, in time order); the key of manual foot assignments. */
	id: string;
	plate: string;
	/** First and last loaded sample (inclusive) and their times. */
	start: number;
	end: number;
	startTime: number;
	endTime: number;
	/** The foot it was assigned to (null: not assigned). */
	foot: Foot | null;
	/** How the foot was decided: by the model's feet over the plate, by the person (run option contactFeet), or not at all. */
	assignedBy: 'model' | 'user' | null;
	/** Two feet share the contact. */
	shared: boolean;
	/** The CoP leaves the plate's outline (beyond the margin) during the contact. */
	offPlate: boolean;
	/** The contact is loaded at the recording's first or last sample. */
	clipped: boolean;
	/** Whether its GRF was applied to the foot for the moments (assigned, and not flagged unless the run says useFlaggedContacts). */
	used: boolean;
	/** Why it was not used, in words (null when used). */
	reason: string | null;
}

export interface GaitEventView {
	foot: Foot;
	kind: GaitEventKind;
	time: number;
	sample: number;
	source: GaitEventSource;
}

/** Why a cycle is left out of the means: see CYCLE_EXCLUSION_TEXT of processing/gait.ts. */
export type CycleExclusionView = CycleExclusion;

/** One gait cycle: a foot strike to the next of the same foot; stance = strike → off, swing = off → next strike. */
export interface GaitCycleView {
	foot: Foot;
	start: number;
	end: number;
	startSample: number;
	endSample: number;
	/** The foot off inside (null when there is none or several). */
	off: number | null;
	offSample: number | null;
	cycleTimeS: number;
	stanceTimeS: number | null;
	swingTimeS: number | null;
	/** Where the foot off lies on 0–100 % of the cycle (the stance/swing boundary to mark). */
	stancePercent: number | null;
	swingPercent: number | null;
	sources: { start: GaitEventSource; off: GaitEventSource | null; end: GaitEventSource };
	/** Null when the cycle is used; else why it is left out. */
	excluded: CycleExclusionView | null;
	/** The reason in words (null when used). */
	excludedText: string | null;
}

/** Mean ± SD (sample SD, n − 1) over a foot's used cycles; null when there are too few values. */
export interface StatView {
	mean: number | null;
	sd: number | null;
	n: number;
}

/** The spatiotemporal parameters of one foot (mean ± SD over its used cycles). */
export interface FootSpatiotemporalView {
	foot: Foot;
	cycles: number;
	/** steps/min */
	cadence: StatView;
	cycleTimeS: StatView;
	stanceTimeS: StatView;
	swingTimeS: StatView;
	stancePercent: StatView;
	swingPercent: StatView;
	doubleSupportS: StatView;
	doubleSupportPercent: StatView;
	/** m (null figures when the pelvis did not progress) */
	stepLengthM: StatView;
	strideLengthM: StatView;
	/** m/s */
	speedMS: StatView;
}

/** The spatiotemporal table: one row per foot, and how lengths were measured. */
export interface SpatiotemporalTable {
	left: FootSpatiotemporalView;
	right: FootSpatiotemporalView;
	/** 'heel': between the ankle joint centres at the strikes; 'pelvis': the pelvis's travel; null: no lengths. */
	lengthBasis: 'heel' | 'pelvis' | null;
}

/** GET /api/studies/:id/runs/:rid/gait — a gait run's ground data and events (`gait: false` for runs without force data). */
export type GaitAnswer =
	| { runId: string; gait: false }
	| {
			runId: string;
			gait: true;
			/** Body mass (kg) and weight (N = m g, |gravity|) the % body weight figures use; null when unknown. */
			bodyMassKg: number | null;
			bodyWeightN: number | null;
			/** Time of every sample at the angle rate (s). */
			t: number[];
			/** What the force file gave and how it was brought to the angle rate. */
			forces: { fileName: string; sampleHz: number; angleHz: number; ratio: number; cutoffHz: number | null; thresholdN: number };
			plates: GaitPlateView[];
			grf: GrfSeries[];
			cop: CopPath[];
			contacts: ContactView[];
			events: GaitEventView[];
			cycles: GaitCycleView[];
			spatiotemporal: SpatiotemporalTable;
	  };
