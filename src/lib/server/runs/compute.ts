// One run's computation without I/O: session model + recording + options → the rows we store (series as bytes, summary, model record).
import os from 'node:os';
import { decodeFloat64, encodeFloat64 } from './results-codec';
import { buildSessionModel, type SessionModel, type SessionSetup } from '../../processing/session-model';
import { groundCutoffHz, NonFiniteResultError, runPipeline, type PipelineResult, type RunOptions } from '../../processing/pipeline';
import { plateSignalsOf, type Recording } from '../../processing/recording';
import { DEFAULT_CONTACT_THRESHOLD_N, forceCutoffHz, type ForcePlate } from '../../processing/forces';
import { gaitCycles, gaitEvents, spatiotemporal, type PlateContact } from '../../processing/gait';
import { groundFromSignals } from '../../processing/foot-contacts';
import { storedGait, type StoredGait } from './gait-record';
import type { ParticipantBody } from '../../anthropometry/scale';

export type SeriesQuantity =
	| 'time'
	| 'angle'
	| 'velocity'
	| 'acceleration'
	| 'moment'
	| 'moment_per_kg'
	| 'power'
	| 'reaction_force'
	/** per plate (name = the plate's name), lab axes, 3 components: the GRF on the person (N), the CoP (m; NaN where unloaded), the free moment (N·m) */
	| 'grf'
	| 'cop'
	| 'free_moment';

/** A trial's force recording for a run: paired with the angle recording (force sample j·ratio falls on angle sample j). */
export interface ForceInput {
	fileName: string;
	/** ratio · the angle rate (Hz) */
	forceHz: number;
	ratio: number;
	/** the plates as set up in the lab when the run is computed (copied into the model record) */
	plates: ForcePlate[];
	recording: Recording;
}

export interface SeriesRow {
	name: string;
	quantity: SeriesQuantity;
	unit: string;
	components: number;
	data: Buffer;
}

export interface ComputedRun {
	series: SeriesRow[];
	summary: PipelineResult['summary'];
	/** Where the results are not reliable near the trial's ends; stored in runs.edge_zone. */
	edgeZone: PipelineResult['edgeZone'];
	/** What the run used, stored with it: the scaled parameters, loads, set-up, gravity and the DOF sign rules. */
	model: Record<string, unknown>;
	timings: Record<string, number>;
	/** Contacts, gait events, cycles and spatiotemporal table of a run with force data (run_gait), else null. */
	gait?: StoredGait | null;
}

const UNITS = {
	rad: { angle: 'rad', velocity: 'rad/s', acceleration: 'rad/s²', moment: 'N·m', moment_per_kg: 'N·m/kg', power: 'W' },
	m: { angle: 'm', velocity: 'm/s', acceleration: 'm/s²', moment: 'N', moment_per_kg: 'N/kg', power: 'W' }
} as const;

/** The model record of a run: enough to know exactly which parameters produced its numbers. */
export function modelRecord(built: SessionModel, options: RunOptions): Record<string, unknown> {
	return {
		table: built.setup.table,
		limbs: built.setup.limbs,
		bodyMassKg: built.bodyMass,
		gravity: options.gravity ?? built.setup.gravity,
		setup: built.setup,
		parameters: built.parameters,
		loadsApplied: built.loadsApplied,
		dofs: built.dofs.map((d) => ({
			name: d.name,
			joint: d.joint,
			motion: d.motion,
			unit: d.unit,
			base: d.base,
			positive: d.positive,
			jointCentre: d.jointCentre
		}))
	};
}

/** The stored rows of a pipeline result: time, six quantities per DOF, base kinematics, the 3-component reaction per joint. */
export function seriesRows(result: PipelineResult, built: SessionModel): SeriesRow[] {
	const unitOf = new Map(built.dofs.map((d) => [d.name, d.unit]));
	const rows: SeriesRow[] = [{ name: 'time', quantity: 'time', unit: 's', components: 1, data: encodeFloat64(result.time) }];
	// prescribed base coordinates (moving bases): their kinematics only, no forces
	for (const b of result.base) {
		const u = UNITS[b.unit];
		rows.push(
			{ name: b.name, quantity: 'angle', unit: u.angle, components: 1, data: encodeFloat64(b.value) },
			{ name: b.name, quantity: 'velocity', unit: u.velocity, components: 1, data: encodeFloat64(b.velocity) },
			{ name: b.name, quantity: 'acceleration', unit: u.acceleration, components: 1, data: encodeFloat64(b.acceleration) }
		);
	}
	for (const d of result.dofs) {
		const u = UNITS[unitOf.get(d.name) ?? 'rad'];
		rows.push(
			{ name: d.name, quantity: 'angle', unit: u.angle, components: 1, data: encodeFloat64(d.angle) },
			{ name: d.name, quantity: 'velocity', unit: u.velocity, components: 1, data: encodeFloat64(d.velocity) },
			{ name: d.name, quantity: 'acceleration', unit: u.acceleration, components: 1, data: encodeFloat64(d.acceleration) },
			{ name: d.name, quantity: 'moment', unit: d.momentUnit ?? u.moment, components: 1, data: encodeFloat64(d.moment) },
			{
				name: d.name,
				quantity: 'moment_per_kg',
				unit: d.momentUnit === 'N' ? 'N/kg' : u.moment_per_kg,
				components: 1,
				data: encodeFloat64(d.momentPerKg)
			},
			{ name: d.name, quantity: 'power', unit: u.power, components: 1, data: encodeFloat64(d.power) }
		);
	}
	for (const r of result.reactions)
		rows.push({ name: r.joint, quantity: 'reaction_force', unit: 'N', components: 3, data: encodeFloat64(r.force) });
	return rows;
}

/**
 * Each plate's loads on the person at the angle rate and its contacts, as a run finds them: the plate's signals
 * filtered at the run's force cutoff (groundCutoffHz; anti-alias capped when the rate is higher), resampled
 * (forces/resample.ts), to lab axes, then findContacts. Used by the run and, to check contactFeet, when one starts.
 */
export function groundAtAngleRate(recording: Pick<Recording, 'sampleHz' | 'time'>, force: ForceInput, options: RunOptions) {
	const thresholdN = options.contactThresholdN ?? DEFAULT_CONTACT_THRESHOLD_N;
	const angleHz = recording.sampleHz;
	const runCutoff = groundCutoffHz(options);
	const signals = plateSignalsOf(force.recording, force.plates);
	const { plates, contacts } = groundFromSignals(
		force.plates.map((plate) => ({ plate, signals: signals.get(plate.name)! })),
		{ forceHz: force.forceHz, angleHz, frames: recording.time.length, cutoffHz: runCutoff, thresholdN }
	);
	return { thresholdN, runCutoff, plates, contacts };
}

/** Builds the model, runs the pipeline and encodes what is stored. Throws the pipeline's own errors unchanged. */
export function computeRun(
	body: ParticipantBody,
	setup: SessionSetup,
	recording: Recording,
	options: RunOptions,
	onProgress?: (fraction: number, stage: string) => void,
	force?: ForceInput | null
): ComputedRun {
	const built = buildSessionModel(body, setup);
	if (!force) {
		// the recording was parsed for this run alone: its arrays are filtered in place
		const result = runPipeline(built, recording, options, onProgress, { reuseInput: true });
		return {
			series: seriesRows(result, built),
			summary: result.summary,
			edgeZone: result.edgeZone,
			model: modelRecord(built, options),
			timings: result.timings,
			gait: null
		};
	}
	// forces: each plate's signals filtered and resampled to the angle rate (forces/resample.ts: zero-lag Butterworth at
	// the run's force cutoff, anti-alias capped when the rate is higher), to lab axes, and its contacts
	const t0 = performance.now();
	const angleHz = recording.sampleHz;
	const { thresholdN, runCutoff, plates, contacts } = groundAtAngleRate(recording, force, options);
	const forceMs = performance.now() - t0;
	const result = runPipeline(built, recording, options, onProgress, { reuseInput: true, ground: { plates, contacts } });
	const t1 = performance.now();
	const ground = result.ground!;
	// gait events: plate events of the contacts used (end exclusive in gait.ts), kinematic events where a foot is off the plates
	const time = result.time;
	const used: PlateContact[] = ground.contacts
		.filter((c) => c.used && c.foot)
		.map((c) => ({ plate: c.plate, foot: c.foot!, start: c.start, end: c.end + 1 }));
	const events = gaitEvents({ time, contacts: used, paths: result.feet });
	const cycles = gaitCycles(events, time, { edgeZone: result.edgeZone });
	const st = spatiotemporal(cycles, events, time, result.feet);
	const series = seriesRows(result, built);
	for (const p of ground.plates) {
		series.push(
			{ name: p.name, quantity: 'grf', unit: 'N', components: 3, data: encodeFloat64(p.grf) },
			{ name: p.name, quantity: 'cop', unit: 'm', components: 3, data: encodeFloat64(p.cop) },
			{ name: p.name, quantity: 'free_moment', unit: 'N·m', components: 3, data: encodeFloat64(p.freeMoment) }
		);
	}
	const cutoffHz = forceCutoffHz(angleHz, force.ratio, runCutoff);
	const forces = {
		fileName: force.fileName,
		sampleHz: force.forceHz,
		angleHz,
		ratio: force.ratio,
		cutoffHz,
		thresholdN,
		bodyWeightN: Number.isFinite(ground.bodyWeightN) && ground.bodyWeightN > 0 ? ground.bodyWeightN : null
	};
	return {
		series,
		summary: result.summary,
		edgeZone: result.edgeZone,
		// the plates' geometry as used: the lab may edit or archive a plate later
		model: { ...modelRecord(built, options), plates: force.plates, forces },
		timings: { ...result.timings, forces: forceMs, gait: performance.now() - t1 },
		gait: storedGait(forces, ground.contacts, time, events, cycles, st)
	};
}

/** The samples of an encoded series without a copy where the bytes are aligned (as encodeFloat64 leaves them). */
function samplesOf(data: Buffer): Float64Array {
	return data.byteOffset % 8 === 0 && os.endianness() === 'LE'
		? new Float64Array(data.buffer, data.byteOffset, data.byteLength / 8)
		: decodeFloat64(data);
}

/**
 * The storage boundary's own check (writeResults calls it before a row is written): every stored number of a run
 * is finite: each series, the summary figures (a part with `samples` 0 has none by design) and the edge zone. The
 * pipeline refuses such results already (assertFiniteResults); this keeps a done run finite whatever produced the
 * rows, so no API answer or export shows an empty cell in place of a failure. Throws NonFiniteResultError (a
 * PipelineError: the worker fails the run at once, with the message).
 */
export function assertStorable(computed: ComputedRun): void {
	const refuse = (what: string, value: number, at: { quantity: string; dof: string; sample: number; time: number }): never => {
		throw new NonFiniteResultError(
			`The results cannot be stored: ${what} is ${value}, not a finite number. The run stores nothing; check the recording and run it again.`,
			{ ...at, value }
		);
	};
	const timeRow = computed.series.find((s) => s.quantity === 'time');
	const time = timeRow ? samplesOf(timeRow.data) : new Float64Array(0);
	for (const s of computed.series) {
		// a CoP is undefined (NaN) wherever its plate is unloaded, by design
		if (s.quantity === 'cop') continue;
		const x = s === timeRow ? time : samplesOf(s.data);
		for (let i = 0; i < x.length; i++) {
			const v = x[i];
			if (v - v === 0) continue;
			const k = Math.floor(i / s.components);
			const t = time[k];
			const axis = s.components === 3 ? ` (${'xyz'[i % 3]})` : '';
			refuse(
				`the ${s.quantity.replace(/_/g, ' ')}${axis} of ${s.name} at ${Number.isFinite(t) ? `${Number(t.toPrecision(6))} s (sample ${k + 1})` : `sample ${k + 1}`}`,
				v,
				{ quantity: s.quantity, dof: s.name, sample: k, time: t }
			);
		}
	}
	const FIGURES = ['peakPositive', 'peakPositiveTime', 'peakNegative', 'peakNegativeTime', 'range', 'mean'] as const;
	for (const row of computed.summary) {
		const parts: [string, Partial<Record<(typeof FIGURES)[number] | 'samples', number>> | undefined][] = [
			['', row],
			[' (whole trial)', row.wholeTrial]
		];
		for (const [label, part] of parts) {
			if (!part || part.samples === 0) continue;
			for (const f of FIGURES) {
				const v = part[f];
				if (typeof v === 'number' && !Number.isFinite(v))
					refuse(`the summary's ${f}${label} of the ${row.quantity} of ${row.dof}`, v, {
						quantity: `summary of ${row.quantity}`,
						dof: row.dof,
						sample: -1,
						time: NaN
					});
			}
		}
	}
	// (the edge zone is stored with the run; read loosely, so this check does not depend on its exact shape)
	for (const [k, v] of Object.entries(computed.edgeZone ?? {}))
		if (typeof v === 'number' && !Number.isFinite(v))
			refuse(`the edge zone's ${k}`, v, { quantity: 'edge zone', dof: k, sample: -1, time: NaN });
}
