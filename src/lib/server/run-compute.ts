// One run's computation without I/O: session model + recording + options → the rows we store (series as bytes, summary, model record).
import { encodeFloat64 } from './results-codec';
import { buildSessionModel, type SessionModel, type SessionSetup } from '../processing/session-model';
import { runPipeline, type PipelineResult, type RunOptions } from '../processing/pipeline';
import type { Recording } from '../processing/recording';
import type { ParticipantBody } from '../anthropometry/scale';

export type SeriesQuantity = 'time' | 'angle' | 'velocity' | 'acceleration' | 'moment' | 'moment_per_kg' | 'power' | 'reaction_force';

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
	/** What the run used, stored with it: the scaled parameters, loads, set-up, gravity and the DOF sign rules. */
	model: Record<string, unknown>;
	timings: Record<string, number>;
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
		dofs: built.dofs.map((d) => ({ name: d.name, joint: d.joint, motion: d.motion, unit: d.unit, base: d.base, positive: d.positive, jointCentre: d.jointCentre }))
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
			{ name: d.name, quantity: 'moment_per_kg', unit: d.momentUnit === 'N' ? 'N/kg' : u.moment_per_kg, components: 1, data: encodeFloat64(d.momentPerKg) },
			{ name: d.name, quantity: 'power', unit: u.power, components: 1, data: encodeFloat64(d.power) }
		);
	}
	for (const r of result.reactions) rows.push({ name: r.joint, quantity: 'reaction_force', unit: 'N', components: 3, data: encodeFloat64(r.force) });
	return rows;
}

/** Builds the model, runs the pipeline and encodes what is stored. Throws the pipeline's own errors unchanged. */
export function computeRun(
	body: ParticipantBody,
	setup: SessionSetup,
	recording: Recording,
	options: RunOptions,
	onProgress?: (fraction: number, stage: string) => void
): ComputedRun {
	const built = buildSessionModel(body, setup);
	// the recording was parsed for this run alone: its arrays are filtered in place
	const result = runPipeline(built, recording, options, onProgress, { reuseInput: true });
	return { series: seriesRows(result, built), summary: result.summary, model: modelRecord(built, options), timings: result.timings };
}
