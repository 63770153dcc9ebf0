// A gait run's ground data and gait results: what the worker stores (run_gait: contacts, events, cycles,
// spatiotemporal table, how the forces were brought to the angle rate; run_series: the GRF, CoP and free moment per
// plate) and the answer of GET /api/studies/:id/runs/:rid/gait. Plates' geometry comes from the run's model record
// (copied there when the run was computed: plates may be edited later).
import type { Transaction } from 'sequelize';
import { Run, RunGait, RunSeries } from '../db/models';
import type { RequestContext } from '../access/context';
import { studyFor, type Actor } from '../access/guard';
import { DomainError } from '../errors';
import { runIn } from './runs';
import { component, decodeFloat64 } from './results-codec';
import { r6, type StoredGait } from './gait-record';
import type { ContactView, GaitAnswer, GaitCycleView, GaitEventView, GaitPlateView } from '../../types/gait';

/** Inside the results' transaction: replaces the run's gait row (a second attempt overwrites the first's). */
export async function writeGait(runId: string, gait: StoredGait | null, transaction: Transaction): Promise<void> {
	await RunGait.destroy({ where: { runId }, transaction });
	if (!gait) return;
	await RunGait.create(
		{
			runId,
			forces: gait.forces,
			contacts: gait.contacts,
			events: gait.events,
			cycles: gait.cycles,
			spatiotemporal: gait.spatiotemporal
		},
		{ transaction }
	);
}

const rounded = (x: Float64Array): number[] => Array.from(x, (v) => r6(v) ?? 0);
const roundedOrNull = (x: Float64Array): (number | null)[] => Array.from(x, (v) => r6(v));

/** GET /api/studies/:id/runs/:rid/gait: a done run's ground data and gait results (gait: false without force data). */
export async function loadGait(actor: Actor | null, ctx: RequestContext, input: { studyId: string; runId: string }): Promise<GaitAnswer> {
	const { study } = await studyFor(actor, ctx, 'study.read', input.studyId);
	const { run } = await runIn(study.id, input.runId);
	if (run.state !== 'done') throw new DomainError('conflict', `This run is ${run.state}; its results can be read once it is done.`);
	const gait = await RunGait.findByPk(run.id);
	if (!gait) return { runId: run.id, gait: false };
	const forces = gait.forces;
	const rows = await RunSeries.findAll({ where: { runId: run.id, quantity: ['time', 'grf', 'cop', 'free_moment'] } });
	const timeRow = rows.find((s) => s.quantity === 'time');
	const t = timeRow ? Array.from(decodeFloat64(timeRow.data), (v) => Math.round(v * 1e6) / 1e6) : [];
	const record = (await Run.findByPk(run.id, { attributes: ['id', 'model'] }))?.model ?? {};
	const plates = (Array.isArray(record.plates) ? record.plates : []) as GaitPlateView[];
	const bodyMassKg = typeof record.bodyMassKg === 'number' ? record.bodyMassKg : null;
	const bw = forces.bodyWeightN ?? null;
	const xyz = <T>(data: Buffer, f: (x: Float64Array) => T[]) => {
		const v = decodeFloat64(data);
		return { x: f(component(v, 3, 0)), y: f(component(v, 3, 1)), z: f(component(v, 3, 2)) };
	};
	const names = plates.length ? plates.map((p) => p.name) : [...new Set(rows.filter((s) => s.quantity === 'grf').map((s) => s.name))];
	const grf = names.flatMap((name) => {
		const g = rows.find((s) => s.quantity === 'grf' && s.name === name);
		if (!g) return [];
		const fm = rows.find((s) => s.quantity === 'free_moment' && s.name === name);
		const n = decodeFloat64(g.data);
		const pct = bw ? new Float64Array(n.length).map((_, i) => (100 * n[i]) / bw) : null;
		return [
			{
				plate: name,
				...xyz(g.data, rounded),
				percentBodyWeight: pct
					? { x: rounded(component(pct, 3, 0)), y: rounded(component(pct, 3, 1)), z: rounded(component(pct, 3, 2)) }
					: null,
				freeMoment: fm ? xyz(fm.data, rounded) : { x: [], y: [], z: [] }
			}
		];
	});
	const cop = names.flatMap((name) => {
		const c = rows.find((s) => s.quantity === 'cop' && s.name === name);
		return c ? [{ plate: name, ...xyz(c.data, roundedOrNull) }] : [];
	});
	const st = gait.spatiotemporal;
	return {
		runId: run.id,
		gait: true,
		bodyMassKg,
		bodyWeightN: bw,
		t,
		forces: {
			fileName: forces.fileName,
			sampleHz: forces.sampleHz,
			angleHz: forces.angleHz,
			ratio: forces.ratio,
			cutoffHz: forces.cutoffHz,
			thresholdN: forces.thresholdN
		},
		plates,
		grf,
		cop,
		contacts: gait.contacts as ContactView[],
		events: gait.events as GaitEventView[],
		cycles: gait.cycles as GaitCycleView[],
		spatiotemporal: st
	};
}
