// The gait part of a session export: for each exported run with force data, its loads per plate at the angle rate
// (ground.csv), its foot contacts, gait events, gait cycles and spatiotemporal table (contacts.csv, events.csv,
// cycles.csv, spatiotemporal.csv), in our own column names with the unit in each header. Read from the run's stored
// rows (run_series grf/cop/free_moment, run_gait); nothing is recomputed.
import { RunGait, RunSeries } from '../db/models';
import { component, decodeFloat64 } from '../runs/results-codec';
import type { StoredForces, StoredGait } from '../runs/gait-record';
import { inEdgeZone, type EdgeZoneView } from '../../processing/zone-exclusion';
import type { ContactView, GaitCycleView, GaitEventView } from '../../types/gait';

/** The series quantities of a run's ground data: exported in ground.csv, not in results.csv (they are not per DOF). */
export const GROUND_QUANTITIES: readonly string[] = ['grf', 'cop', 'free_moment'];

/** The file names of a trial's gait folder, in the order they are written (documented in README.txt). */
export const GAIT_FILES = ['ground.csv', 'contacts.csv', 'events.csv', 'cycles.csv', 'spatiotemporal.csv'] as const;

const csvText = (s: string) => (/[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s);
/** A number as written; an empty cell where the value is not defined (a CoP while the plate is unloaded, an SD of one cycle). */
const cell = (v: number | null | undefined) => (v === null || v === undefined || !Number.isFinite(v) ? '' : String(v));
const lines = (head: string[], rows: string[][]) => [head.join(','), ...rows.map((r) => r.join(','))].join('\n') + '\n';

/** What the export keeps of a run's gait results. */
export interface RunGaitExport {
	forces: StoredForces;
	lengthBasis: 'heel' | 'pelvis' | null;
	/** file name in the trial's gait folder → its text */
	files: Map<(typeof GAIT_FILES)[number], string>;
}

/** The per-plate loads as one table: a row per sample at the angle rate, three columns per load and plate (lab axes). */
async function groundCsv(runId: string, zone: EdgeZoneView): Promise<string> {
	const rows = await RunSeries.findAll({ where: { runId, quantity: ['time', ...GROUND_QUANTITIES] }, order: [['name', 'ASC']] });
	const timeRow = rows.find((r) => r.quantity === 'time');
	const time = timeRow ? decodeFloat64(timeRow.data) : new Float64Array(0);
	const plates = [...new Set(rows.filter((r) => r.quantity === 'grf').map((r) => r.name))];
	const cols: { name: string; values: Float64Array }[] = [];
	const label = { grf: ['grf_lab', 'N'], cop: ['cop_lab', 'm'], free_moment: ['free_moment_lab', 'N·m'] } as const;
	for (const plate of plates)
		for (const q of ['grf', 'cop', 'free_moment'] as const) {
			const row = rows.find((r) => r.quantity === q && r.name === plate);
			if (!row) continue;
			const all = decodeFloat64(row.data);
			for (let c = 0; c < 3; c++) cols.push({ name: `${plate}.${label[q][0]}.${'xyz'[c]} (${label[q][1]})`, values: component(all, 3, c) });
		}
	const out: string[] = [['time (s)', 'in_edge_zone', ...cols.map((c) => csvText(c.name))].join(',')];
	for (let i = 0; i < time.length; i++)
		out.push([cell(time[i]), String(inEdgeZone(i, time.length, zone)), ...cols.map((c) => cell(c.values[i]))].join(','));
	return out.join('\n') + '\n';
}

const yesNo = (b: boolean) => (b ? 'true' : 'false');

function contactsCsv(contacts: ContactView[]): string {
	return lines(
		[
			'contact',
			'plate',
			'foot',
			'assigned_by',
			'start (s)',
			'end (s)',
			'start_sample',
			'end_sample',
			'shared',
			'off_plate',
			'clipped',
			'used',
			'not_used_because'
		],
		contacts.map((c) => [
			csvText(c.id),
			csvText(c.plate),
			c.foot ?? '',
			c.assignedBy ?? '',
			cell(c.startTime),
			cell(c.endTime),
			String(c.start),
			String(c.end),
			yesNo(c.shared),
			yesNo(c.offPlate),
			yesNo(c.clipped),
			yesNo(c.used),
			csvText(c.reason ?? '')
		])
	);
}

function eventsCsv(events: GaitEventView[]): string {
	return lines(
		['foot', 'event', 'time (s)', 'sample', 'source'],
		events.map((e) => [e.foot, e.kind === 'strike' ? 'foot_strike' : 'foot_off', cell(e.time), String(e.sample), e.source])
	);
}

function cyclesCsv(cycles: GaitCycleView[]): string {
	const n: Record<string, number> = {};
	return lines(
		[
			'foot',
			'cycle',
			'start (s)',
			'end (s)',
			'foot_off (s)',
			'cycle_time (s)',
			'stance_time (s)',
			'swing_time (s)',
			'stance (% cycle)',
			'swing (% cycle)',
			'start_source',
			'foot_off_source',
			'end_source',
			'in_means',
			'left_out_because'
		],
		cycles.map((c) => [
			c.foot,
			String((n[c.foot] = (n[c.foot] ?? 0) + 1)),
			cell(c.start),
			cell(c.end),
			cell(c.off),
			cell(c.cycleTimeS),
			cell(c.stanceTimeS),
			cell(c.swingTimeS),
			cell(c.stancePercent),
			cell(c.swingPercent),
			c.sources.start,
			c.sources.off ?? '',
			c.sources.end,
			yesNo(!c.excluded),
			csvText(c.excludedText ?? '')
		])
	);
}

/** The spatiotemporal rows, per foot: parameter, unit and the key of the stored figure. */
const PARAMETERS = [
	['cadence', 'steps/min', 'cadence'],
	['cycle_time', 's', 'cycleTimeS'],
	['stance_time', 's', 'stanceTimeS'],
	['swing_time', 's', 'swingTimeS'],
	['stance', '% cycle', 'stancePercent'],
	['swing', '% cycle', 'swingPercent'],
	['double_support', 's', 'doubleSupportS'],
	['double_support', '% cycle', 'doubleSupportPercent'],
	['step_length', 'm', 'stepLengthM'],
	['stride_length', 'm', 'strideLengthM'],
	['speed', 'm/s', 'speedMS']
] as const;

function spatiotemporalCsv(st: StoredGait['spatiotemporal']): string {
	const rows: string[][] = [];
	for (const foot of ['left', 'right'] as const) {
		const f = st[foot];
		for (const [name, unit, key] of PARAMETERS) {
			const s = f[key];
			rows.push([foot, name, csvText(unit), cell(s?.mean), cell(s?.sd), String(s?.n ?? 0)]);
		}
	}
	return lines(['foot', 'parameter', 'unit', 'mean', 'sd', 'cycles'], rows);
}

/** A run's gait files, or null for a run without force data. */
export async function runGaitExport(runId: string, zone: EdgeZoneView): Promise<RunGaitExport | null> {
	const g = await RunGait.findByPk(runId);
	if (!g) return null;
	const st = g.spatiotemporal;
	const files = new Map<(typeof GAIT_FILES)[number], string>([
		['ground.csv', await groundCsv(runId, zone)],
		['contacts.csv', contactsCsv(g.contacts)],
		['events.csv', eventsCsv(g.events)],
		['cycles.csv', cyclesCsv(g.cycles)],
		['spatiotemporal.csv', spatiotemporalCsv(st)]
	]);
	return { forces: g.forces, lengthBasis: st?.lengthBasis ?? null, files };
}
