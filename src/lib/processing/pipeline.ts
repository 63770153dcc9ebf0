// From a parsed recording to joint moments: filter, differentiate, batch inverse dynamics, per-DOF summary.
import { z } from 'zod';
import { compileModel, createWorkspace, inverseDynamicsBatch, PRISMATIC, type ExternalLoad, type Vec3 } from '../dynamics/index';
import type { Recording } from './recording';
import type { SessionModel } from './session-model';
import type { Contact, ForcePlate, LabLoads } from './forces/index';
import { assignContacts, footBodies, footPoints, type AssignedContact } from './foot-contacts';
import type { Foot, GaitPaths } from './gait';
import {
	DEFAULT_END_TREATMENT,
	END_TREATMENTS,
	END_TREATMENT_LABELS,
	EDGE_ZONE_FAMILY,
	differentiateWithEnds,
	edgeZoneSamples,
	smoothWithEnds,
	type EndTreatment,
	type SmoothedSignal
} from './edges';
import { DEFAULT_MAX_GAP_SAMPLES, fillGaps, MIN_SAMPLES_FOR_FILTER, SignalError } from './signal';
import { reliableRange, type ZoneSamples } from './zone-exclusion';

const finite = z.number({ error: 'must be a number' }).refine(Number.isFinite, 'must be a finite number');
const cutoff = finite.refine((v) => v > 0, 'must be a positive frequency in Hz');

export const runOptionsSchema = z.object({
	/** Low-pass cutoff for every channel, Hz (zero-lag Butterworth); null = no filter. */
	cutoffHz: cutoff.nullable().default(6),
	/** Per-channel cutoffs (channel name → Hz), overriding cutoffHz for those channels. */
	perChannelCutoffHz: z.record(z.string(), cutoff).optional(),
	/**
	 * How each channel is continued beyond its first and last samples before filtering and differentiation
	 * (src/lib/processing/edges.ts; docs/processing.md, "Ends of a recording"). Also used without a filter.
	 */
	endTreatment: z
		.enum(END_TREATMENTS, { error: `endTreatment must be one of ${END_TREATMENTS.join(', ')}` })
		.default(DEFAULT_END_TREATMENT),
	/** Fill short gaps (empty cells) by cubic interpolation before filtering. */
	fillGaps: z.boolean().default(false),
	/** Gravity in lab axes, m/s²; default the session set-up's. */
	gravity: z.tuple([finite, finite, finite]).optional(),
	/**
	 * Low-pass cutoff for the force-plate signals, Hz, or null for none (then only the anti-alias filter of a rate
	 * above the angles'); absent: the angles' cutoffHz (common practice, to keep impact artefacts out of the moments).
	 * Applied before the run by whoever brings the forces to the angle rate: groundCutoffHz(options).
	 */
	forceCutoffHz: cutoff.nullable().optional(),
	/** Use contacts flagged off the plate or shared (when a foot is set) for the moments too; default false. */
	useFlaggedContacts: z.boolean().optional(),
	/**
	 * Vertical force (N) from which a plate counts as loaded: contacts, the CoP and plate events start there; absent:
	 * 20 N (DEFAULT_CONTACT_THRESHOLD_N, common practice). 5–200 N: below, plate noise makes contacts; above, the
	 * first and last moments of a stance are lost.
	 */
	contactThresholdN: finite.refine((v) => v >= 5 && v <= 200, 'must be from 5 to 200 N').optional(),
	/** Feet set by hand, by contact id `<plate>#<k>` (k: the plate's contacts in time order, from 0); null = no foot. */
	contactFeet: z.record(z.string(), z.enum(['left', 'right']).nullable()).optional()
});
export type RunOptions = z.infer<typeof runOptionsSchema>;

/**
 * Options read back from a stored run. A run stored before end treatments existed was made with scipy's 9-sample
 * reflection and one-sided end differences, so a retry of it keeps that rather than taking today's default.
 */
export function storedRunOptions(stored: unknown) {
	const legacy = stored !== null && typeof stored === 'object' && !('endTreatment' in stored);
	return runOptionsSchema.safeParse(legacy ? { ...stored, endTreatment: 'reflect-9' } : stored);
}
export type RunOptionsInput = z.input<typeof runOptionsSchema>;

/** The cutoff (Hz, null: none) at which a run filters its force-plate signals: forceCutoffHz, else the angles' cutoffHz. */
export function groundCutoffHz(options: Pick<RunOptions, 'cutoffHz' | 'forceCutoffHz'>): number | null {
	return options.forceCutoffHz === undefined ? options.cutoffHz : options.forceCutoffHz;
}

/** A plate's loads on the person at the angle rate (one sample per angle sample): plateToLab / plateLoadsAtAngleRate. */
export interface GroundPlate {
	plate: ForcePlate;
	loads: LabLoads;
}

/** Force-plate data for a run, at the angle rate. */
export interface GroundInput {
	plates: GroundPlate[];
	/** The plates' contacts (findContacts), any order. */
	contacts: Contact[];
	/** Foot margin of the assignment (m); default DEFAULT_FOOT_MARGIN_M. */
	marginM?: number;
}

/** A contact as the run used it. */
export interface GroundContact extends AssignedContact {
	/** Its GRF and free moment acted on the foot for the moments. */
	used: boolean;
	/** Why not, in words (null when used). */
	reason: string | null;
}

/** Ground results of a run with force plates. */
export interface GroundResult {
	/** Body weight (N) the % figures use: body mass × |gravity|. */
	bodyWeightN: number;
	plates: {
		name: string;
		/** GRF on the person (N) and as % of body weight, lab axes, interleaved x y z. */
		grf: Float64Array;
		grfPercentBW: Float64Array;
		/** CoP (m, lab), NaN where unloaded; free moment on the person (N·m, lab vector). */
		cop: Float64Array;
		freeMoment: Float64Array;
		loaded: Uint8Array;
	}[];
	contacts: GroundContact[];
}

export const PIPELINE_STAGES = ['filter', 'differentiate', 'dynamics', 'summary'] as const;
export type PipelineStage = (typeof PIPELINE_STAGES)[number];

export interface DofSeries {
	name: string;
	/** Sign rule of the angle; a positive moment acts on the distal segment in the same rotational sense. */
	positive: string;
	/** rad, rad/s, rad/s² (m, m/s, m/s² for a prismatic DOF). */
	angle: Float64Array;
	velocity: Float64Array;
	acceleration: Float64Array;
	/** Internal joint moment, proximal segment on distal segment, about this DOF's axis: N·m (N for a prismatic DOF). */
	moment: Float64Array;
	momentUnit: 'N·m' | 'N';
	/** moment / body mass, N·m/kg. */
	momentPerKg: Float64Array;
	/** moment × angular velocity, W (positive: the joint moment does positive work on the distal segment). */
	power: Float64Array;
}

/** Peaks (with the time each is first reached), range and mean of one series over some of its samples. */
export interface SummaryStats {
	peakPositive: number;
	peakPositiveTime: number;
	peakNegative: number;
	peakNegativeTime: number;
	range: number;
	mean: number;
	/** How many samples the figures are taken over (0: none, and every figure NaN, null in JSON). */
	samples: number;
}

/**
 * One DOF's summary of one quantity. The top-level figures leave the edge zone out (the samples outside it);
 * `wholeTrial` has the same figures over every sample, for the "Include edge zones" switch.
 */
export interface SummaryRow extends SummaryStats {
	dof: string;
	quantity: 'moment' | 'angle' | 'power';
	unit: string;
	wholeTrial: SummaryStats;
}

/**
 * The stretch at each end of a run in which the numbers are not reliable: the filter's end transient and the
 * derivatives' end formulas reach into it. Computed by the pipeline from the filter and differentiation it used,
 * stored with the run, shaded in plots and left out of peaks, summaries, repetitions and group means by default.
 */
export interface EdgeZone {
	/** Seconds after the first sample, and before the last sample, that are inside the zone (0 = none). */
	startSeconds: number;
	endSeconds: number;
	/** The same as whole samples: samples [0, startSamples) and [n − endSamples, n) are inside the zone. */
	startSamples: number;
	endSamples: number;
	/** How it was found, in words, for provenance (filter, cutoff, end treatment, derivative formula). */
	basis: string;
}

export interface PipelineResult {
	time: Float64Array;
	/** Where the results are not reliable near the trial's ends. */
	edgeZone: EdgeZone;
	sampleHz: number;
	dofs: DofSeries[];
	/** Prescribed base coordinates (moving bases): kinematics only. */
	base: { name: string; unit: 'm' | 'rad'; value: Float64Array; velocity: Float64Array; acceleration: Float64Array }[];
	/** Per joint centre: force the proximal segment (or base) exerts on the distal one, ground axes, interleaved x y z, N. */
	reactions: { joint: string; force: Float64Array }[];
	summary: SummaryRow[];
	/** Milliseconds per stage. */
	timings: Record<string, number>;
	/** What was applied, for provenance: cutoff per channel (null = unfiltered), gravity. */
	applied: { cutoffHz: Record<string, number | null>; gravity: Vec3; filledGaps: Record<string, number> };
	/** Lab paths of the pelvis and each foot's ankle ("heel") and toe from the filtered angles: for models with legs on a pelvis or with ground data. */
	feet?: GaitPaths;
	/** Plates, contacts and which were used: present when ground data were given. */
	ground?: GroundResult;
}

export class PipelineError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'PipelineError';
	}
}

const now = () => (typeof performance !== 'undefined' ? performance.now() : Date.now());
/** Frames per inverse-dynamics block: small interleaved buffers instead of whole-recording copies. */
const BLOCK = 2048;

/**
 * Runs the processing chain on a recording whose channels are in `built.expected` order (SI units).
 * onProgress(fraction 0…1 of the whole run, stage) is called as each stage starts and during the dynamics.
 */
export function runPipeline(
	built: SessionModel,
	rec: Recording,
	optionsInput: RunOptionsInput | RunOptions = {},
	onProgress?: (fraction: number, stage: string) => void,
	/**
	 * reuseInput: the recording's channel arrays may become the filtered angles (filtered in place), saving one copy.
	 * ground: force-plate loads at the angle rate and their contacts; during each usable contact the GRF and free
	 * moment act on the contact's foot at the CoP.
	 */
	{ reuseInput = false, ground }: { reuseInput?: boolean; ground?: GroundInput } = {}
): PipelineResult {
	const parsed = runOptionsSchema.safeParse(optionsInput);
	if (!parsed.success)
		throw new PipelineError(`run options: ${parsed.error.issues.map((i) => `${i.path.join('.') || 'options'}: ${i.message}`).join('; ')}`);
	const options = parsed.data;
	const timings: Record<string, number> = {};
	const progress = onProgress ?? (() => {});
	const weights: Record<PipelineStage, [number, number]> = {
		filter: [0, 0.1],
		differentiate: [0.1, 0.2],
		dynamics: [0.2, 0.95],
		summary: [0.95, 1]
	};
	const report = (stage: PipelineStage, within: number) =>
		progress(weights[stage][0] + (weights[stage][1] - weights[stage][0]) * within, stage);

	const frames = rec.time.length;
	const n = built.dofs.length;
	if (rec.channels.length !== n)
		throw new PipelineError(
			`the recording has ${rec.channels.length} channels; the session model needs ${n} (${built.expected.map((e) => e.name).join(', ')})`
		);
	built.expected.forEach((e, j) => {
		const ch = rec.channels[j];
		if (ch.name !== e.name) throw new PipelineError(`channel ${j + 1} is "${ch.name}"; the session model expects "${e.name}" there`);
		if (ch.values.length !== frames)
			throw new PipelineError(`channel "${ch.name}" has ${ch.values.length} samples; the time column has ${frames}`);
	});
	if (!(rec.sampleHz > 0) || !Number.isFinite(rec.sampleHz))
		throw new PipelineError(`sampling rate ${rec.sampleHz} Hz is not a positive number`);
	if (frames < 4) throw new PipelineError(`the recording has ${frames} samples; differentiation needs at least 4`);
	for (const name of Object.keys(options.perChannelCutoffHz ?? {}))
		if (!built.dofs.some((d) => d.name === name))
			throw new PipelineError(
				`perChannelCutoffHz names "${name}", which is not a channel of this session (${built.expected.map((e) => e.name).join(', ')})`
			);
	const dt = 1 / rec.sampleHz;
	const nyquist = rec.sampleHz / 2;

	// 1. gaps and filter
	let t0 = now();
	report('filter', 0);
	const cutoffs: Record<string, number | null> = {};
	const filledGaps: Record<string, number> = {};
	const angle: Float64Array[] = [];
	// each channel continued beyond its ends by the end treatment, filtered, and kept with its continued neighbours for the derivatives
	const smoothed: SmoothedSignal[] = [];
	for (let j = 0; j < n; j++) {
		const name = built.dofs[j].name;
		let x = rec.channels[j].values;
		let missing = 0;
		for (let k = 0; k < frames; k++) if (x[k] !== x[k]) missing++;
		if (missing) {
			if (!options.fillGaps)
				throw new PipelineError(`channel "${name}" has ${missing} missing samples; re-run with gap filling on, or fix the file`);
			// the gap rule (gapBridgeable of signal.ts): a gap at the start or end, or a long one, stays missing
			const r = fillGaps(x, DEFAULT_MAX_GAP_SAMPLES);
			if (r.tooLong.length) {
				const { start, length } = r.tooLong[0];
				const where =
					start === 0
						? ' at the start (nothing to interpolate from)'
						: start + length === frames
							? ' at the end (nothing to interpolate from)'
							: '';
				throw new PipelineError(`channel "${name}": a gap of ${length} samples at sample ${start + 1}${where} is too long to fill`);
			}
			x = r.filled;
			filledGaps[name] = missing;
		}
		const fc = options.perChannelCutoffHz?.[name] ?? options.cutoffHz;
		cutoffs[name] = fc;
		const own = reuseInput || x !== rec.channels[j].values; // gap filling already made a copy of its own
		if (fc !== null) {
			if (fc >= nyquist) throw new PipelineError(`cutoff ${fc} Hz for "${name}" must be below half the sampling rate (${nyquist} Hz)`);
			if (frames < MIN_SAMPLES_FOR_FILTER)
				throw new PipelineError(
					`the recording has ${frames} samples; filtering needs at least ${MIN_SAMPLES_FOR_FILTER} (or run without a filter)`
				);
		}
		try {
			const s = smoothWithEnds(x, rec.sampleHz, fc, options.endTreatment, own ? x : new Float64Array(frames));
			smoothed.push(s);
			angle.push(s.value);
		} catch (e) {
			if (e instanceof SignalError) throw new PipelineError(`channel "${name}": ${e.message}`);
			throw e;
		}
		report('filter', (j + 1) / n);
	}
	timings.filter = now() - t0;
	// a recording wholly inside its edge zones has nothing reliable to report: refuse it rather than give empty figures
	const edgeZone = edgeZoneOf(rec.sampleHz, frames, cutoffs, options.endTreatment);
	if (frames - edgeZone.startSamples - edgeZone.endSamples < 1)
		throw new PipelineError(
			`the recording (${frames} samples, ${((frames - 1) / rec.sampleHz).toFixed(3)} s) lies wholly inside its edge zones (${edgeZone.startSeconds.toFixed(3)} s at each end, where the filtered and differentiated values are not reliable): record more frames before and after the movement, or run without a filter`
		);

	// 2. derivatives
	t0 = now();
	report('differentiate', 0);
	const velocity: Float64Array[] = [];
	const acceleration: Float64Array[] = [];
	for (let j = 0; j < n; j++) {
		const d = differentiateWithEnds(smoothed[j], dt, { velocity: new Float64Array(frames), acceleration: new Float64Array(frames) });
		velocity.push(d.velocity);
		acceleration.push(d.acceleration);
		report('differentiate', (j + 1) / n);
	}
	timings.differentiate = now() - t0;

	// 3. inverse dynamics, block by block
	t0 = now();
	report('dynamics', 0);
	const model = compileModel(built.model);
	const gravity = (options.gravity ?? built.setup.gravity) as Vec3;
	const ws = createWorkspace(model);
	const hasLegs = built.model.bodies.some((b) => b.name === 'right.foot' || b.name === 'left.foot');
	const feet = hasLegs && (built.pelvis || ground) ? footPoints(built, angle, model) : undefined;
	const groundPlan = ground ? planGround(built, ground, feet, options, frames, Math.hypot(...gravity) * built.bodyMass) : null;
	const reported = built.dofs.map((d, j) => ({ d, j })).filter(({ d }) => !d.base);
	const moment = new Map<number, Float64Array>(reported.map(({ j }) => [j, new Float64Array(frames)]));
	// one reaction per joint centre: the load on the first body of the centre's chain (its massless links pass it on unchanged)
	const centres: { joint: string; body: number; force: Float64Array }[] = [];
	for (const d of built.dofs) {
		if (d.base || centres.some((c) => c.joint === d.jointCentre)) continue;
		centres.push({ joint: d.jointCentre, body: d.body, force: new Float64Array(3 * frames) });
	}
	const B = Math.min(BLOCK, frames);
	const qB = new Float64Array(B * n),
		qdB = new Float64Array(B * n),
		qddB = new Float64Array(B * n),
		QB = new Float64Array(B * n),
		fB = new Float64Array(B * n * 3);
	const mass = built.bodyMass;
	const perKg = new Map<number, Float64Array>(reported.map(({ j }) => [j, new Float64Array(frames)]));
	const power = new Map<number, Float64Array>(reported.map(({ j }) => [j, new Float64Array(frames)]));
	const batchOut = { Q: QB, force: fB };
	const batchOpts = {
		gravity,
		reactionFrame: 'world' as const,
		loadsAt: undefined as ((k: number) => readonly ExternalLoad[] | null) | undefined
	};
	for (let k0 = 0; k0 < frames; k0 += B) {
		const len = Math.min(B, frames - k0);
		if (groundPlan) batchOpts.loadsAt = (k) => groundPlan.loadsAt(k0 + k);
		for (let j = 0; j < n; j++) {
			interleave(angle[j], qB, k0, len, n, j);
			interleave(velocity[j], qdB, k0, len, n, j);
			interleave(acceleration[j], qddB, k0, len, n, j);
		}
		inverseDynamicsBatch(model, len, qB, qdB, qddB, batchOut, batchOpts, ws);
		for (const { j } of reported) momentsOut(QB, k0, len, n, j, 1 / mass, velocity[j], moment.get(j)!, perKg.get(j)!, power.get(j)!);
		for (const c of centres) reactionOut(fB, k0, len, n, c.body, c.force);
		report('dynamics', (k0 + len) / frames);
	}
	const dofs: DofSeries[] = reported.map(({ d, j }) => ({
		name: d.name,
		positive: d.positive,
		angle: angle[j],
		velocity: velocity[j],
		acceleration: acceleration[j],
		moment: moment.get(j)!,
		momentUnit: model.kind[d.body] === PRISMATIC ? 'N' : 'N·m',
		momentPerKg: perKg.get(j)!,
		power: power.get(j)!
	}));
	const base = built.dofs
		.map((d, j) => ({ d, j }))
		.filter(({ d }) => d.base)
		.map(({ d, j }) => ({ name: d.name, unit: d.unit, value: angle[j], velocity: velocity[j], acceleration: acceleration[j] }));
	timings.dynamics = now() - t0;

	// 4. summary: peaks, range and mean outside the edge zone, and over the whole trial
	t0 = now();
	report('summary', 0);
	const summary: SummaryRow[] = [];
	for (const s of dofs) {
		const prismatic = s.momentUnit === 'N';
		summary.push(summarise(s.name, 'moment', s.moment, rec.time, s.momentUnit, edgeZone));
		summary.push(summarise(s.name, 'angle', s.angle, rec.time, prismatic ? 'm' : 'rad', edgeZone));
		summary.push(summarise(s.name, 'power', s.power, rec.time, 'W', edgeZone));
	}
	timings.summary = now() - t0;
	report('summary', 1);

	// 5. a result with a non-finite number fails the run whole: nothing of it may be stored, shown or exported
	assertFiniteResults(rec.time, dofs, base, centres, summary);

	return {
		time: rec.time,
		edgeZone,
		sampleHz: rec.sampleHz,
		dofs,
		base,
		reactions: centres.map((c) => ({ joint: c.joint, force: c.force })),
		summary,
		timings,
		applied: { cutoffHz: cutoffs, gravity: [...gravity] as Vec3, filledGaps },
		...(feet ? { feet } : {}),
		...(groundPlan ? { ground: groundPlan.result } : {})
	};
}

/**
 * Which plate loads act on which foot at each sample, and the ground results. A contact is used when it has a foot the
 * model has, is not shared and not off the plate (either allowed with options.useFlaggedContacts); over its samples
 * start…end the plate's GRF and free moment act on that foot's body at the CoP (a lab point). One load per plate and
 * sample, refilled in place.
 */
function planGround(
	built: SessionModel,
	ground: GroundInput,
	feet: GaitPaths | undefined,
	options: RunOptions,
	frames: number,
	bodyWeightN: number
): { loadsAt: (k: number) => readonly ExternalLoad[]; result: GroundResult } {
	const P = ground.plates.length;
	ground.plates.forEach(({ plate, loads }) => {
		if (
			loads.grf.length !== 3 * frames ||
			loads.cop.length !== 3 * frames ||
			loads.freeMoment.length !== 3 * frames ||
			loads.loaded.length !== frames
		)
			throw new PipelineError(
				`plate ${plate.name}: its loads hold ${loads.loaded.length} samples; the recording has ${frames} (forces must be brought to the angle rate first)`
			);
	});
	const names = ground.plates.map((g) => g.plate.name);
	for (const c of ground.contacts) {
		if (!names.includes(c.plate))
			throw new PipelineError(`a contact is on plate "${c.plate}", which has no loads in this run (${names.join(', ')})`);
		if (!(c.start >= 0 && c.end < frames && c.start <= c.end))
			throw new PipelineError(`a contact on plate ${c.plate} runs from sample ${c.start + 1} to ${c.end + 1}; the recording has ${frames}`);
	}
	let assigned: AssignedContact[];
	try {
		assigned = assignContacts(
			ground.contacts,
			ground.plates.map((g) => g.plate),
			{ left: feet?.left, right: feet?.right },
			{
				marginM: ground.marginM,
				overrides: options.contactFeet,
				cop: Object.fromEntries(ground.plates.map((g) => [g.plate.name, g.loads.cop]))
			}
		);
	} catch (e) {
		throw new PipelineError(e instanceof Error ? e.message : String(e));
	}
	const bodies = footBodies(built);
	const active = new Int32Array(frames * Math.max(P, 1)).fill(-1);
	const contacts: GroundContact[] = assigned.map((c) => {
		const p = names.indexOf(c.plate);
		let reason: string | null = null;
		if (c.foot === null) reason = c.shared ? 'two feet share it' : 'no foot assigned';
		else if (bodies[c.foot] < 0) reason = `the model has no ${c.foot} foot`;
		else if (c.shared && !options.useFlaggedContacts) reason = 'two feet share it (flagged; not used unless flagged contacts are used)';
		else if (c.offPlate && !options.useFlaggedContacts)
			reason = 'its CoP runs off the plate (flagged; not used unless flagged contacts are used)';
		if (reason === null) {
			const cop = ground.plates[p].loads.cop;
			for (let k = c.start; k <= c.end; k++) {
				if (!(Number.isFinite(cop[3 * k]) && Number.isFinite(cop[3 * k + 1]) && Number.isFinite(cop[3 * k + 2])))
					throw new PipelineError(
						`contact ${c.id} (plate ${c.plate}, ${c.foot} foot) has no centre of pressure at sample ${k + 1}, inside the contact`
					);
				if (active[k * P + p] >= 0) throw new PipelineError(`contacts on plate ${c.plate} overlap at sample ${k + 1}`);
				active[k * P + p] = bodies[c.foot as Foot];
			}
		}
		return { ...c, used: reason === null, reason };
	});
	const own: ExternalLoad[] = ground.plates.map(() => ({
		body: 0,
		point: [0, 0, 0],
		force: [0, 0, 0],
		torque: [0, 0, 0],
		frame: 'world',
		pointFrame: 'world'
	}));
	const now: ExternalLoad[] = [];
	const loadsAt = (k: number): readonly ExternalLoad[] => {
		now.length = 0;
		for (let p = 0; p < P; p++) {
			const b = active[k * P + p];
			if (b < 0) continue;
			const L = own[p],
				{ grf, cop, freeMoment } = ground.plates[p].loads,
				k3 = 3 * k;
			L.body = b;
			for (let c = 0; c < 3; c++) {
				L.point[c] = cop[k3 + c];
				L.force[c] = grf[k3 + c];
				L.torque![c] = freeMoment[k3 + c];
			}
			now.push(L);
		}
		return now;
	};
	const result: GroundResult = {
		bodyWeightN,
		plates: ground.plates.map(({ plate, loads }) => {
			const pct = new Float64Array(3 * frames);
			for (let i = 0; i < 3 * frames; i++) pct[i] = (100 * loads.grf[i]) / bodyWeightN;
			return { name: plate.name, grf: loads.grf, grfPercentBW: pct, cop: loads.cop, freeMoment: loads.freeMoment, loaded: loads.loaded };
		}),
		contacts
	};
	return { loadsAt, result };
}

/**
 * The edge zone of a run: for each distinct cutoff used (null = no filter), edgeZoneSamples of edges.ts — the
 * samples at each end where the end treatment's own error, measured on a family of smooth random movements with
 * and without 0.15° noise, exceeds half the middle's error (the rule is in edges.ts and docs/processing.md);
 * the run's zone is the longest, capped at half the recording. The same at both ends: the rule pools them.
 */
export function edgeZoneOf(
	sampleHz: number,
	frames: number,
	cutoffs: Record<string, number | null>,
	treatment: EndTreatment = DEFAULT_END_TREATMENT
): EdgeZone {
	const distinct = [...new Set(Object.values(cutoffs))];
	if (!distinct.length) distinct.push(null);
	let samples = 0,
		worst: number | null = null;
	for (const fc of distinct) {
		const z = edgeZoneSamples(sampleHz, fc, treatment);
		if (z > samples || (z === samples && fc !== null && worst === null)) {
			samples = z;
			worst = fc;
		}
	}
	samples = Math.min(samples, Math.floor(frames / 2));
	const seconds = samples / sampleHz;
	const filter =
		worst === null
			? 'no filter'
			: `zero-lag Butterworth low-pass at ${worst} Hz${distinct.length > 1 ? ` (the longest zone among cutoffs ${distinct.map((c) => (c === null ? 'none' : `${c} Hz`)).join(', ')})` : ''}`;
	const rule =
		worst === null
			? 'without a filter only the first and last samples use anything but their measured neighbours for the central differences'
			: `where the end's own error exceeds half the middle's error for the angle, velocity or acceleration, measured on smooth random movements sampled at ${sampleHz} Hz with and without ${EDGE_ZONE_FAMILY.noiseDeg}° noise`;
	const diff = treatment === 'reflect-9' ? 'one-sided differences at the ends, central elsewhere' : 'central differences throughout';
	return {
		startSamples: samples,
		endSamples: samples,
		startSeconds: seconds,
		endSeconds: seconds,
		basis: `${samples} sample${samples === 1 ? '' : 's'} (${seconds.toFixed(3)} s) at each end: ${filter}, ${END_TREATMENT_LABELS[treatment]}, ${diff}; ${rule}.`
	};
}

// Small loops of their own, so the JIT optimises each on its own (one big function deoptimised as a whole).

/** Channel x[k0 … k0+len) into column j of a frames × n row-major block. */
function interleave(x: Float64Array, block: Float64Array, k0: number, len: number, n: number, j: number): void {
	for (let k = 0; k < len; k++) block[k * n + j] = x[k0 + k];
}

/** Column j of the block's Q into the moment, moment per kg and power series. */
function momentsOut(
	Q: Float64Array,
	k0: number,
	len: number,
	n: number,
	j: number,
	perKgFactor: number,
	velocity: Float64Array,
	moment: Float64Array,
	perKg: Float64Array,
	power: Float64Array
): void {
	for (let k = 0; k < len; k++) {
		const m = Q[k * n + j];
		moment[k0 + k] = m;
		perKg[k0 + k] = m * perKgFactor;
		power[k0 + k] = m * velocity[k0 + k];
	}
}

/** Body b's reaction force (x, y, z) from the block into an interleaved whole-recording series. */
function reactionOut(f: Float64Array, k0: number, len: number, n: number, b: number, out: Float64Array): void {
	const b3 = 3 * b,
		n3 = 3 * n;
	for (let k = 0; k < len; k++) {
		const s = k * n3 + b3,
			d = 3 * (k0 + k);
		out[d] = f[s];
		out[d + 1] = f[s + 1];
		out[d + 2] = f[s + 2];
	}
}

/** Peak positive and negative values (first time each is reached), range and mean of samples [from, to] of a series. */
export function statsOf(x: ArrayLike<number>, time: ArrayLike<number>, from = 0, to = x.length - 1): SummaryStats {
	let hi = -Infinity,
		lo = Infinity,
		hiK = -1,
		loK = -1,
		sum = 0;
	for (let k = from; k <= to; k++) {
		const v = x[k];
		if (v > hi) {
			hi = v;
			hiK = k;
		}
		if (v < lo) {
			lo = v;
			loK = k;
		}
		sum += v;
	}
	const samples = Math.max(0, to - from + 1);
	if (!samples || hiK < 0 || loK < 0)
		return { peakPositive: NaN, peakPositiveTime: NaN, peakNegative: NaN, peakNegativeTime: NaN, range: NaN, mean: NaN, samples };
	return {
		peakPositive: hi,
		peakPositiveTime: time[hiK],
		peakNegative: lo,
		peakNegativeTime: time[loK],
		range: hi - lo,
		mean: sum / samples,
		samples
	};
}

/**
 * One series' summary row: the figures over the samples outside the edge zone (samples [0, startSamples) and
 * [n − endSamples, n) are left out; NaN with samples 0 when the zone covers them all), and over every sample.
 */
export function summarise(
	dof: string,
	quantity: SummaryRow['quantity'],
	x: Float64Array,
	time: Float64Array,
	unit: string,
	zone: ZoneSamples = { startSamples: 0, endSamples: 0 }
): SummaryRow {
	const wholeTrial = statsOf(x, time);
	const kept = reliableRange(x.length, zone);
	const outside = !kept
		? statsOf(x, time, 0, -1)
		: kept.first === 0 && kept.last === x.length - 1
			? { ...wholeTrial }
			: statsOf(x, time, kept.first, kept.last);
	return { dof, quantity, ...outside, unit, wholeTrial };
}

/** The results hold a value that is not a finite number: the run fails with this message and stores nothing. */
export class NonFiniteResultError extends PipelineError {
	constructor(
		message: string,
		/** What was not finite, for tests and logs: the quantity, the DOF or joint, and the first sample. */
		readonly at: { quantity: string; dof: string; sample: number; time: number; value: number }
	) {
		super(message);
	}
}

/** Index of the first value of x (every `stride`-th from `offset`) that is not finite, or −1. */
function firstNonFinite(x: Float64Array, stride = 1, offset = 0): number {
	for (let i = offset; i < x.length; i += stride) {
		const v = x[i];
		// v − v is 0 for a finite v and NaN for ±Infinity or NaN
		if (v - v !== 0) return (i - offset) / stride;
	}
	return -1;
}

/**
 * Throws NonFiniteResultError at the first non-finite number of a run's results: the earliest sample of any series,
 * and at that sample the first quantity in the order the pipeline makes them (time; angles, velocities and
 * accelerations of the DOFs and base coordinates; moments, moments per kg and powers; reaction forces), so that
 * the name points at the cause (a velocity that overflowed) rather than what followed (every moment). Then the
 * summary figures (those taken over at least one sample: a row with `samples` 0 has no figures by design).
 * Overflowing numbers (e.g. angles far beyond any movement, or gravity of 1e308) would otherwise be stored as
 * Infinity or NaN and become empty cells in JSON and exports.
 */
export function assertFiniteResults(
	time: Float64Array,
	dofs: readonly DofSeries[],
	base: PipelineResult['base'],
	reactions: readonly { joint: string; force: Float64Array }[],
	summary: readonly SummaryRow[]
): void {
	type Series = { quantity: string; kind: string; name: string; x: Float64Array; stride: number; offset: number };
	const series: Series[] = [{ quantity: 'time', kind: 'the', name: 'recording', x: time, stride: 1, offset: 0 }];
	const one = (quantity: string, kind: string, name: string, x: Float64Array) =>
		series.push({ quantity, kind, name, x, stride: 1, offset: 0 });
	for (const b of base) one('position or angle', 'base coordinate', b.name, b.value);
	for (const d of dofs) one('angle', 'DOF', d.name, d.angle);
	for (const b of base) one('velocity', 'base coordinate', b.name, b.velocity);
	for (const d of dofs) one('velocity', 'DOF', d.name, d.velocity);
	for (const b of base) one('acceleration', 'base coordinate', b.name, b.acceleration);
	for (const d of dofs) one('acceleration', 'DOF', d.name, d.acceleration);
	for (const d of dofs) one('moment', 'DOF', d.name, d.moment);
	for (const d of dofs) one('moment per kg', 'DOF', d.name, d.momentPerKg);
	for (const d of dofs) one('power', 'DOF', d.name, d.power);
	for (const r of reactions)
		for (let c = 0; c < 3; c++)
			series.push({ quantity: `reaction force (${'xyz'[c]})`, kind: 'joint', name: r.joint, x: r.force, stride: 3, offset: c });
	let worst: { s: Series; k: number } | null = null;
	for (const s of series) {
		const k = firstNonFinite(s.x, s.stride, s.offset);
		if (k >= 0 && (!worst || k < worst.k)) worst = { s, k };
	}
	if (worst) {
		const { s, k } = worst;
		const value = s.x[k * s.stride + s.offset];
		const t = time[k];
		const when = Number.isFinite(t) ? `at ${Number(t.toPrecision(6))} s (sample ${k + 1})` : `at sample ${k + 1}`;
		throw new NonFiniteResultError(
			`The results are not finite numbers: the ${s.quantity} of ${s.kind} ${s.name} is ${value} ${when}, the first such value. The run stores nothing. ` +
				'Check the recording for values far beyond any movement (and the run options, e.g. gravity), then run it again.',
			{ quantity: s.quantity, dof: s.name, sample: k, time: t, value }
		);
	}
	for (const row of summary) {
		const figures = [row.peakPositive, row.peakPositiveTime, row.peakNegative, row.peakNegativeTime, row.range, row.mean];
		const whole = row.wholeTrial
			? [
					row.wholeTrial.peakPositive,
					row.wholeTrial.peakPositiveTime,
					row.wholeTrial.peakNegative,
					row.wholeTrial.peakNegativeTime,
					row.wholeTrial.range,
					row.wholeTrial.mean
				]
			: [];
		const bad = (row.samples === 0 ? [] : figures).concat(row.wholeTrial?.samples === 0 ? [] : whole).find((v) => !Number.isFinite(v));
		if (bad !== undefined)
			throw new NonFiniteResultError(
				`The results are not finite numbers: the summary of the ${row.quantity} of DOF ${row.dof} holds ${bad}. The run stores nothing. Check the recording, then run it again.`,
				{
					quantity: `summary of ${row.quantity}`,
					dof: row.dof,
					sample: -1,
					time: NaN,
					value: bad
				}
			);
	}
}
