// Export of an approved session as one ZIP streamed to the client: results.csv (long format, one row per value, each
// marked in or out of its run's edge zone), provenance.json (with each run's edge zone and its peaks without the
// edge zones), README.txt, the raw uploads byte for byte (force files too) and, for a run with force data, its gait
// files (export-gait.ts). Never any participant's personal data.
import { Readable } from 'node:stream';
import { ZipArchive } from 'archiver';
import { Participant, RunSeries } from '../db/models';
import { conflict } from '../errors';
import type { Actor } from '../access/guard';
import type { RequestContext } from '../access/context';
import { readRaw } from '../trials/raw-store';
import { recordSession, studySession, type SessionRef } from './sessions';
import { exportTrialRows, type ExportTrialRow } from './queries';
import { listRunsForSession, softwareVersion, storedResultsOf, summaryRows, type RunView } from '../runs/runs';
import { component, decodeFloat64 } from '../runs/results-codec';
import { SEGMENT_TABLES, type SegmentTableId } from '../../anthropometry/tables';
import { approvalOf } from './workflow';
import { GAIT_FILES, GROUND_QUANTITIES, runGaitExport, type RunGaitExport } from './export-gait';
import { eventsOfRun } from '../review/review';
import { normaliseCycles } from '../../processing/cycles';
import { EDGE_ZONE_NOT_COMPUTED, inEdgeZone, reliableSpan, timeInEdgeZone, type EdgeZoneView } from '../../processing/zone-exclusion';

/** Column names of results.csv, in order (documented in README.txt and the project README). */
export const RESULT_COLUMNS = [
	'participant',
	'trial',
	'run',
	'dof',
	'quantity',
	'unit',
	'axis',
	'repetition',
	'x',
	'value',
	'in_edge_zone'
] as const;

export interface ExportTrial {
	trial: ExportTrialRow;
	archivePath: string;
	/** The trial's separate force file in the archive (null without one, or with the forces in the angle file). */
	forceArchivePath: string | null;
	/** The folder of the exported run's gait files (used only when the run has force data). */
	gaitFolder: string;
	/** The latest done run that is not excluded, or null. */
	run: RunView | null;
	others: RunView[];
}

/** The run of a trial that goes into exports and reports: the newest done one whose flag decision is not 'exclude'. */
export function exportedRunOf(runs: RunView[]): RunView | null {
	const ok = runs.filter((r) => r.state === 'done' && r.flagDecision !== 'exclude');
	return ok.length ? ok[ok.length - 1] : null;
}

/** The session's trials (oldest first) with the run exported for each. */
export async function exportTrials(sessionId: string): Promise<ExportTrial[]> {
	const trials = await exportTrialRows(sessionId);
	const runs = await listRunsForSession(sessionId);
	const used = new Set<string>();
	return trials.map((t) => {
		const mine = runs.filter((r) => r.trialId === t.id);
		const run = exportedRunOf(mine);
		// one safe entry name per file: no folders, no leading dots, unique within the ZIP
		const unique = (fileName: string, prefix: string) => {
			const base = fileName.replace(/[\\/]/g, '_').replace(/^\.+/, '') || 'trial';
			let name = base;
			for (let k = 2; used.has(prefix + name); k++) name = `${k}-${base}`;
			used.add(prefix + name);
			return prefix + name;
		};
		const archivePath = unique(t.file_name, 'raw/');
		const separateForce = t.force_raw_upload_id && t.force_file_name && t.force_raw_upload_id !== t.raw_upload_id;
		return {
			trial: t,
			archivePath,
			forceArchivePath: separateForce ? unique(t.force_file_name!, 'raw/') : null,
			gaitFolder: unique(archivePath.slice(4).replace(/\.[^.]*$/, '') || 'trial', 'gait/'),
			run,
			others: mine.filter((r) => r !== run)
		};
	});
}

const csvText = (s: string) => (/[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s);
/** A value as written; never an empty cell in place of a number (refuseNonFinite has checked every exported series). */
const num = (v: number) => {
	if (!Number.isFinite(v)) throw new Error(`a non-finite value (${v}) reached the export`);
	return String(v);
};

/** One stored series of a run, as numbers. */
async function seriesValues(runId: string, name: string, quantity: RunSeries['quantity']): Promise<Float64Array | null> {
	const row = await RunSeries.findOne({ where: { runId, name, quantity }, attributes: ['data'] });
	return row ? decodeFloat64(row.data) : null;
}

/**
 * Conflict before anything is streamed when an exported run is not done or any number it stored is not finite (runs
 * stored before the storage check may hold such values); the message names the run, its trial and the series.
 */
export async function refuseNonFinite(trials: ExportTrial[]): Promise<void> {
	for (const { trial, run } of trials) {
		if (!run) continue;
		if (run.state !== 'done')
			throw conflict(`Run ${run.number} of trial “${trial.file_name}” is ${run.state}, not done; it cannot be exported.`);
		const meta = await RunSeries.findAll({
			where: { runId: run.id },
			attributes: ['name', 'quantity'],
			order: [
				['name', 'ASC'],
				['quantity', 'ASC']
			]
		});
		for (const s of meta) {
			// a centre of pressure is undefined (NaN) wherever its plate is unloaded, by design: ground.csv leaves those cells empty
			if (s.quantity === 'cop') continue;
			const values = (await seriesValues(run.id, s.name, s.quantity))!;
			const k = values.findIndex((v) => !Number.isFinite(v));
			if (k >= 0)
				throw conflict(
					`Run ${run.number} of trial “${trial.file_name}” holds a value that is not a finite number (${s.quantity.replace(/_/g, ' ')} of ${s.name}, value ${k + 1}), so the session cannot be exported. Run the trial again (new runs are checked before they are stored), then export.`
				);
		}
	}
}
const QUANTITY_ORDER = ['angle', 'velocity', 'acceleration', 'moment', 'moment_per_kg', 'power', 'reaction_force'];

/** results.csv, produced block by block: one series of one run at a time (never the whole file in memory). */
async function* resultsCsv(participantCode: string, trials: ExportTrial[]): AsyncGenerator<Buffer> {
	yield Buffer.from(RESULT_COLUMNS.join(',') + '\n');
	for (const { trial, run } of trials) {
		if (!run) continue;
		// the plates' loads are not per DOF: they go to the trial's gait/…/ground.csv
		const meta = (await RunSeries.findAll({ where: { runId: run.id }, attributes: ['name', 'quantity', 'unit', 'components'] })).filter(
			(s) => s.quantity !== 'time' && !GROUND_QUANTITIES.includes(s.quantity)
		);
		const timeRow = await RunSeries.findOne({ where: { runId: run.id, quantity: 'time' }, attributes: ['data'] });
		if (!timeRow) continue;
		const time = decodeFloat64(timeRow.data);
		const saved = await eventsOfRun(run.id);
		// events outside this run's time span (never saved that way, but the run could be re-made) are left out
		const events = saved && saved.length >= 2 && saved[0] >= time[0] && saved[saved.length - 1] <= time[time.length - 1] ? saved : null;
		const stored = await storedResultsOf(run.id);
		// a run made before edge zones has none: every row is outside it
		const zone = stored.edgeZone;
		const span = reliableSpan(time, zone);
		const order = new Map((stored.modelFields.dofs ?? []).map((d, i) => [d.name, i]));
		meta.sort(
			(a, b) =>
				(order.get(a.name) ?? 1e9) - (order.get(b.name) ?? 1e9) ||
				a.name.localeCompare(b.name) ||
				QUANTITY_ORDER.indexOf(a.quantity) - QUANTITY_ORDER.indexOf(b.quantity)
		);
		const head = `${csvText(participantCode)},${csvText(trial.file_name)},${run.number},`;
		for (const s of meta) {
			const all = (await seriesValues(run.id, s.name, s.quantity))!;
			for (let c = 0; c < s.components; c++) {
				const values = component(all, s.components, c);
				const quantity = s.components === 3 ? `${s.quantity}_${'xyz'[c]}` : s.quantity;
				const prefix = `${head}${csvText(s.name)},${quantity},${csvText(s.unit)},time_s,,`;
				let block: string[] = [];
				for (let i = 0; i < values.length && i < time.length; i++) {
					block.push(`${prefix}${num(time[i])},${num(values[i])},${inEdgeZone(i, time.length, zone)}\n`);
					if (block.length === 5000) {
						yield Buffer.from(block.join(''));
						block = [];
					}
				}
				if (block.length) yield Buffer.from(block.join(''));
				// the repetitions between the run's saved events, each time-normalised to 0..100 % in 1 % steps
				if (events) {
					const { percent, cycles } = normaliseCycles(time, values, events);
					const cyclePrefix = `${head}${csvText(s.name)},${quantity},${csvText(s.unit)},cycle_percent,`;
					const rows: string[] = [];
					const last = percent.length - 1;
					cycles.forEach((cycle, k) =>
						percent.forEach((x, j) => {
							// the time of this point, as normaliseCycles places it: in the zone when it lies before the first or after the last sample outside it
							const t = j === last ? events[k + 1] : events[k] + ((events[k + 1] - events[k]) * j) / last;
							rows.push(`${cyclePrefix}${k + 1},${num(x)},${num(cycle[j])},${timeInEdgeZone(t, span)}\n`);
						})
					);
					if (rows.length) yield Buffer.from(rows.join(''));
				}
			}
		}
	}
}

const README = `Momentry session export
=======================

This archive holds one approved session: its results, where they came from, and the raw files as uploaded.

results.csv — one row per value, long format. Columns:
  participant  the participant's study code (never a name)
  trial        the trial's file name as uploaded
  run          the run's number within its trial (1 = first run)
  dof          the degree of freedom, <side>.<joint>.<motion> (for reaction_force_* rows: the joint)
  quantity     angle, velocity, acceleration, moment (internal joint moment, proximal on distal segment),
               moment_per_kg (moment / body mass), power (moment x angular velocity),
               reaction_force_x / _y / _z (joint reaction force in lab axes: X anterior, Y superior, Z right)
  unit         the unit of value (rad, rad/s, rad/s², N·m, N·m/kg, W, N; m-based units for a sliding DOF)
  axis         what x is: time_s (time in seconds from the start of the trial) or cycle_percent
  repetition   for cycle_percent rows, the repetition (1, 2, …); empty for time_s rows
  x            the time (s) or the percentage of the cycle
  value        the value (always a finite number: a run with any other value is never exported)
  in_edge_zone true where the row lies in its run's edge zone, false elsewhere: the first and last stretch of
               the trial, where filtered and differentiated angles, hence joint moments, are not reliable
               (time_s rows: the sample is in the zone; cycle_percent rows: the point's time is in it or between a
               sample in it and the first or last sample outside it). Each run's zone, in seconds and samples, is
               in provenance.json (trials[].run.edgeZone). Runs made before edge zones were introduced have none
               recorded: every row is false. Leave the true rows out of peaks and means unless you mean to
               include the edge zones.
  Angles are positive in the sense each DOF states in provenance.json (model.dofs[].positive); a positive
  moment acts on the distal segment in that same sense.
  Of each trial only its newest finished run is exported; a run excluded after a consent withdrawal never is.

provenance.json — software version, export time, the study (code, title, ethics reference), the participant's
  code, the session (date, task, conditions, model set-up), per trial its file name, SHA-256, size, sample rate and
  frames, the exported run's options (filter and cutoffs, gravity), its edge zone (edgeZone: startSeconds,
  endSeconds, startSamples, endSamples, basis, endTreatment; computed false for runs made before edge zones),
  its peaks, range and mean per DOF (peaks.outsideEdgeZone, the default: over the samples outside the edge
  zone, as peaks.scope states; peaks.wholeTrial: every sample, edge zones included), the scaled model
  parameters, the anthropometric table with its full citation, and the session's approval (approver, time,
  meaning).

raw/ — each trial's file exactly as uploaded; its SHA-256 is in provenance.json (trials[].rawSha256). A trial's
  separate force-plate file is there too (trials[].forceFile: archivePath, sha256, sampleHz, plates); a trial whose
  angle file carries the plate columns itself has forceFile.sameFile true and no second file.

gait/<trial>/ — for a trial whose exported run has force-plate data (provenance.json trials[].run.gait), in lab axes
  (X anterior, Y superior, Z right), SI units; an empty cell is a value that is not defined there:
  ground.csv          one row per sample at the angle rate: time (s), in_edge_zone, then per plate
                      <plate>.grf_lab.x|y|z (N)         ground reaction force on the person
                      <plate>.cop_lab.x|y|z (m)         centre of pressure on the plate's top surface (empty while
                                                        the plate is unloaded, below the contact threshold)
                      <plate>.free_moment_lab.x|y|z (N·m)  free moment on the person about the plate's normal
                      (the forces low-pass filtered and brought to the angle rate as provenance.json
                      trials[].run.gait.forces says: sample rate, ratio, cutoff, contact threshold)
  contacts.csv        each loaded interval of a plate: contact (<plate>#<n>), plate, foot, assigned_by (model or
                      user), start (s), end (s), start_sample, end_sample (0-based rows of ground.csv, inclusive),
                      shared, off_plate, clipped, used (its force applied to the foot for the moments),
                      not_used_because
  events.csv          foot, event (foot_strike or foot_off), time (s), sample, source (plate or kinematic)
  cycles.csv          one row per cycle (a foot strike to the next of the same foot): foot, cycle, start (s),
                      end (s), foot_off (s), cycle_time (s), stance_time (s), swing_time (s), stance (% cycle),
                      swing (% cycle), the source of each event, in_means, left_out_because
  spatiotemporal.csv  per foot: parameter (cadence, cycle_time, stance_time, swing_time, stance, swing,
                      double_support, step_length, stride_length, speed), unit, mean, sd (sample SD), cycles (n)

CAUTION: these results are model-based estimates for research. They are not a clinical diagnosis.
`;

const filterOf = (o: RunView['options']) =>
	o.cutoffHz === null
		? { kind: 'none' }
		: {
				kind: 'zero-lag Butterworth low-pass (run forward and backward)',
				cutoffHz: o.cutoffHz,
				perChannelCutoffHz: o.perChannelCutoffHz ?? {}
			};

/** A run's edge zone for provenance.json, with the end treatment from the run's options (null where none was recorded). */
function edgeZoneOf(run: RunView, zone: EdgeZoneView) {
	const endTreatment = run.options.endTreatment ?? null;
	return { ...zone, endTreatment, ...(zone.computed ? {} : { note: EDGE_ZONE_NOT_COMPUTED }) };
}

/** The export of an approved session: its file name and the ZIP as a Node stream (the route sends it). */
export interface SessionArchive {
	fileName: string;
	archive: Readable;
}

/** Guard, approved sessions only, audited, then the ZIP, produced as it is read. */
export async function exportSession(actor: Actor | null, ctx: RequestContext, ref: SessionRef): Promise<SessionArchive> {
	const { actor: a, study, session: s } = await studySession(actor, ctx, 'session.export', ref);
	if (s.state !== 'approved') throw conflict(`Only an approved session can be exported; this session is ${s.state.replace('_', ' ')}.`);
	const p = (await Participant.findByPk(s.participantId, { attributes: ['id', 'code'] }))!;
	const trials = await exportTrials(s.id);
	await refuseNonFinite(trials);
	const approval = await approvalOf(s.id);
	const exportedAt = new Date();
	const stored = await Promise.all(trials.map((t) => storedResultsOf(t.run?.id ?? null)));
	const gait: (RunGaitExport | null)[] = [];
	for (const [i, t] of trials.entries()) gait.push(t.run ? await runGaitExport(t.run.id, stored[i].edgeZone) : null);
	const provenance = {
		format: 'momentry-session-export/1',
		software: { name: 'Momentry', version: softwareVersion() },
		exportedAt: exportedAt.toISOString(),
		study: { code: study.code, title: study.title, ethicsReference: study.ethicsReference ?? null },
		participant: { code: p.code },
		session: { date: s.sessionOn, task: s.task, conditions: s.conditions, state: s.state, setup: s.setup },
		approval,
		resultsColumns: RESULT_COLUMNS,
		trials: trials.map((t, i) => {
			const { model, modelFields, edgeZone, summary } = stored[i];
			const tableId = (modelFields.table ?? s.setup.table) as SegmentTableId;
			return {
				fileName: t.trial.file_name,
				archivePath: t.archivePath,
				rawSha256: t.trial.sha256,
				byteSize: Number(t.trial.byte_size),
				sampleHz: t.trial.sample_hz,
				frames: t.trial.frame_count,
				durationS: t.trial.duration_s,
				channels: t.trial.channels,
				forceFile: t.trial.force_raw_upload_id
					? {
							fileName: t.trial.force_file_name,
							sha256: t.trial.force_sha256,
							sampleHz: t.trial.force_sample_hz,
							plates: t.trial.force_plates,
							sameFile: t.trial.force_raw_upload_id === t.trial.raw_upload_id,
							archivePath: t.forceArchivePath ?? t.archivePath,
							byteSize: t.trial.force_byte_size === null ? null : Number(t.trial.force_byte_size)
						}
					: null,
				run: t.run && {
					number: t.run.number,
					options: t.run.options,
					filter: filterOf(t.run.options),
					gravity: modelFields.gravity ?? null,
					rawSha256: t.run.rawSha256,
					softwareVersion: t.run.softwareVersion,
					finishedAt: t.run.finishedAt,
					flagDecision: t.run.flagDecision,
					edgeZone: edgeZoneOf(t.run, edgeZone),
					peaks: {
						scope: edgeZone.computed
							? 'outsideEdgeZone (the default): over the samples outside the edge zone; wholeTrial: over every sample, edge zones included'
							: `over every sample in both (edge zone ${EDGE_ZONE_NOT_COMPUTED})`,
						outsideEdgeZone: summaryRows(summary, false),
						wholeTrial: summaryRows(summary, true)
					},
					anthropometricTable: { id: tableId, ...(SEGMENT_TABLES[tableId] ?? {}) },
					model,
					gait: gait[i] && {
						folder: t.gaitFolder,
						files: GAIT_FILES.map((f) => `${t.gaitFolder}/${f}`),
						forces: gait[i]!.forces,
						lengthBasis: gait[i]!.lengthBasis
					}
				},
				runsNotExported: t.others.map((r) => ({
					number: r.number,
					state: r.state,
					flagDecision: r.flagDecision,
					reason: r.flagDecision === 'exclude' ? 'excluded' : r.state !== 'done' ? `not done (${r.state})` : 'a newer run is exported'
				}))
			};
		})
	};
	await recordSession(
		a,
		ctx,
		'session.exported',
		{ studyId: study.id, sessionId: s.id },
		{ runs: trials.filter((t) => t.run).map((t) => t.run!.id), trials: trials.length }
	);

	const archive = new ZipArchive({ zlib: { level: 6 } });
	const date = exportedAt;
	archive.append(README, { name: 'README.txt', date });
	archive.append(JSON.stringify(provenance, null, 2) + '\n', { name: 'provenance.json', date });
	archive.append(Readable.from(resultsCsv(p.code, trials), { objectMode: false }), { name: 'results.csv', date });
	for (const t of trials) {
		archive.append(Readable.from(readRaw(t.trial.raw_upload_id, { expectSha256: t.trial.sha256 }), { objectMode: false }), {
			name: t.archivePath,
			date
		});
		if (t.forceArchivePath && t.trial.force_raw_upload_id)
			archive.append(
				Readable.from(readRaw(t.trial.force_raw_upload_id, { expectSha256: t.trial.force_sha256 ?? undefined }), { objectMode: false }),
				{ name: t.forceArchivePath, date }
			);
	}
	for (const [i, t] of trials.entries())
		for (const [file, text] of gait[i]?.files ?? []) archive.append(text, { name: `${t.gaitFolder}/${file}`, date });
	archive.finalize().catch((err: unknown) => console.error('session export failed:', err));
	const safe = (x: string) => x.replace(/[^A-Za-z0-9._-]+/g, '_');
	const fileName = `${safe(study.code)}-${safe(p.code)}-${safe(s.sessionOn)}-session.zip`;
	return { fileName, archive };
}
