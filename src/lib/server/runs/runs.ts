// Processing runs of trials: starting one (guarded, consent-checked, queued), the worker's processing with progress
// and all-or-nothing results, retries, and reading results for the API and the pages.
import { FormProblem } from '../errors';
import { contextOf } from '../http/edge';
import type { RequestEvent } from '@sveltejs/kit';
import { error, isHttpError } from '@sveltejs/kit';
import { execFileSync } from 'node:child_process';
import { randomUUID } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { Worker } from 'node:worker_threads';
import { QueryTypes, type Transaction } from 'sequelize';
import { z } from 'zod';
import { db } from '../db/index';
import { Run, RunSeries, type RunState, type SessionState } from '../db/models';
import { participantBodyOf } from '../sessions/sessions';
import { record } from '../audit/record';
import { requireValidConsent } from '../consent/check';
import { enqueueRun } from '../jobs/queue';
import { readRaw } from '../trials/raw-store';
import { assertSessionUnlocked, refuseIfLocked } from '../sessions/lock';
import { isUuid } from '../studies/studies';
import { guardStudy } from '../studies/records';
import { may } from '../access/guard';
import { component, decodeFloat64 } from './results-codec';
import { reduceForPlot } from '../../processing/reduce';
import { assertStorable, computeRun, type ComputedRun, type SeriesRow } from './compute';
import type { RunThreadInput, RunThreadMessage } from '../jobs/run-thread-types';
import { buildSessionModel, sessionSetupSchema, type SessionSetup } from '../../processing/session-model';
import { runOptionsSchema, storedRunOptions, type RunOptions, type SummaryRow, type SummaryStats } from '../../processing/pipeline';
import { edgeZoneView, type EdgeZoneView } from '../../processing/zone-exclusion';
import { parseRecording, columnMappingSchema, type Recording, type Problem } from '../../processing/recording';
import { residualAnalysis } from '../../processing/signal';
import type { ParticipantBody } from '../../anthropometry/scale';

// ---------------------------------------------------------------------------------------------- provenance

let version: string | null = null;

/** package.json's version plus the git commit when there is one (e.g. "0.1.0+3f2c9ab1d0e4"), resolved once. */
export function softwareVersion(): string {
	if (version) return version;
	let v = 'unknown';
	try {
		v = String(JSON.parse(fs.readFileSync(path.resolve('package.json'), 'utf8')).version ?? 'unknown');
	} catch {
		// keep "unknown": a run still records that we could not tell
	}
	let commit = process.env.MOMENTRY_COMMIT ?? '';
	if (!commit) {
		try {
			commit = execFileSync('git', ['rev-parse', '--short=12', 'HEAD'], { stdio: ['ignore', 'pipe', 'ignore'], timeout: 3_000 }).toString().trim();
			const dirty = execFileSync('git', ['status', '--porcelain', '--untracked-files=no', '--', 'src'], { stdio: ['ignore', 'pipe', 'ignore'], timeout: 3_000 }).toString().trim();
			if (commit && dirty) commit += '.modified';
		} catch {
			commit = '';
		}
	}
	version = /^[0-9a-f]{7,40}(\.modified)?$/.test(commit) ? `${v}+${commit}` : v;
	return version;
}

// ---------------------------------------------------------------------------------------------- views

export interface RunView {
	id: string;
	trialId: string;
	/** 1-based, in order of creation within the trial. */
	number: number;
	state: RunState;
	progress: number;
	stage: string | null;
	options: RunOptions;
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

interface RunRow {
	id: string;
	trial_id: string;
	state: RunState;
	progress: number;
	stage: string | null;
	options: RunOptions;
	error: string | null;
	attempts: number;
	created_at: Date;
	started_at: Date | null;
	finished_at: Date | null;
	raw_sha256: string;
	software_version: string;
	flagged_reason: string | null;
	flag_decision: string | null;
	number: string | number;
}

const RUN_COLUMNS = `r.id, r.trial_id, r.state, r.progress, r.stage, r.options, r.error, r.attempts, r.created_at, r.started_at, r.finished_at,
	r.raw_sha256, r.software_version, r.flagged_reason, r.flag_decision,
	(SELECT count(*) FROM runs o WHERE o.trial_id = r.trial_id AND (o.created_at, o.id) <= (r.created_at, r.id)) AS number`;

const iso = (d: Date | null) => (d ? new Date(d).toISOString() : null);
const viewOf = (r: RunRow): RunView => ({
	id: r.id,
	trialId: r.trial_id,
	number: Number(r.number),
	state: r.state,
	progress: Number(r.progress),
	stage: r.stage,
	options: r.options,
	error: r.error,
	attempts: r.attempts,
	createdAt: iso(r.created_at)!,
	startedAt: iso(r.started_at),
	finishedAt: iso(r.finished_at),
	rawSha256: r.raw_sha256,
	softwareVersion: r.software_version,
	flaggedReason: r.flagged_reason,
	flagDecision: r.flag_decision
});

/** Every run of the session's trials, oldest first (the caller has checked access to the session). */
export async function listRunsForSession(sessionId: string): Promise<RunView[]> {
	const rows = await db().query<RunRow>(
		`SELECT ${RUN_COLUMNS} FROM runs r JOIN trials t ON t.id = r.trial_id WHERE t.session_id = :sessionId ORDER BY r.created_at, r.id`,
		{ replacements: { sessionId }, type: QueryTypes.SELECT }
	);
	return rows.map(viewOf);
}

async function runRow(runId: string, transaction?: Transaction): Promise<RunView | null> {
	const rows = await db().query<RunRow>(`SELECT ${RUN_COLUMNS} FROM runs r WHERE r.id = :runId`, { replacements: { runId }, type: QueryTypes.SELECT, transaction });
	return rows[0] ? viewOf(rows[0]) : null;
}

// ---------------------------------------------------------------------------------------------- records in a study

interface TrialContext {
	trialId: string;
	sessionId: string;
	studyId: string;
	participantId: string;
	participantCode: string;
	rawUploadId: string;
	fileName: string;
	sha256: string;
	mapping: unknown;
	setup: unknown;
	sessionState: string;
	sampleHz: number;
	channels: string[];
}

const TRIAL_CONTEXT = `SELECT t.id AS "trialId", s.id AS "sessionId", s.study_id AS "studyId", s.participant_id AS "participantId", p.code AS "participantCode",
	t.raw_upload_id AS "rawUploadId", t.file_name AS "fileName", t.sha256, t.mapping, s.setup, s.state AS "sessionState", t.sample_hz AS "sampleHz", t.channels
	FROM trials t JOIN sessions s ON s.id = t.session_id JOIN participants p ON p.id = s.participant_id`;

/** The trial of the study in the URL; another study's trial, or a malformed id, answers 404. */
async function trialIn(studyId: string, rawTrialId: string): Promise<TrialContext> {
	if (!isUuid(rawTrialId)) error(404, 'Not found');
	const rows = await db().query<TrialContext>(`${TRIAL_CONTEXT} WHERE t.id = :trialId AND s.study_id = :studyId`, {
		replacements: { trialId: rawTrialId.toLowerCase(), studyId },
		type: QueryTypes.SELECT
	});
	if (!rows[0]) error(404, 'Not found');
	return rows[0];
}

async function trialOfRun(runId: string): Promise<(TrialContext & { runId: string }) | null> {
	const rows = await db().query<TrialContext & { runId: string }>(`${TRIAL_CONTEXT.replace('SELECT ', 'SELECT r.id AS "runId", ')} JOIN runs r ON r.trial_id = t.id WHERE r.id = :runId`, {
		replacements: { runId },
		type: QueryTypes.SELECT
	});
	return rows[0] ?? null;
}

/** The run of the study in the URL, with its trial; 404 otherwise. */
export async function runIn(studyId: string, rawRunId: string): Promise<{ run: RunView; trial: TrialContext }> {
	if (!isUuid(rawRunId)) error(404, 'Not found');
	const trial = await trialOfRun(rawRunId.toLowerCase());
	if (!trial || trial.studyId !== studyId) error(404, 'Not found');
	const run = (await runRow(trial.runId))!;
	return { run, trial };
}

/** The participant's body for scaling (one rule with the session page: latest measured length per segment). */
async function participantBody(participantId: string): Promise<ParticipantBody> {
	try {
		return await participantBodyOf(participantId);
	} catch (err) {
		throw new RunFailure((err as Error).message);
	}
}

// ---------------------------------------------------------------------------------------------- options from forms and JSON

/** Field errors of run options, keyed as the form's fields are named. */
function optionProblems(issues: z.core.$ZodIssue[]): Record<string, string> {
	const out: Record<string, string> = {};
	for (const i of issues) {
		const k = i.path[0] === 'perChannelCutoffHz' ? `channelCutoff.${String(i.path[1] ?? '')}` : String(i.path[0] ?? 'form');
		out[k] ??= i.message;
	}
	return out;
}

/** Validates run options (a JSON body or the parsed form); throws FormProblem(400) with field messages. */
export function parseRunOptions(input: unknown): RunOptions {
	const r = runOptionsSchema.safeParse(input);
	if (!r.success) throw new FormProblem(optionProblems(r.error.issues));
	return r.data;
}

const numberOrNull = (v: FormDataEntryValue | null) => (v === null || String(v).trim() === '' ? null : Number(String(v).trim().replace(',', '.')));

/**
 * The "New run" form: filter=lowpass|none, cutoffHz, optional channelCutoff.<channel> fields (from residual
 * analysis), fillGaps=on, gravity=setup|custom with gravityX/Y/Z. A form without the `filter` field is refused.
 */
export function runOptionsFromForm(form: FormData): RunOptions {
	const filter = form.get('filter');
	if (filter !== 'lowpass' && filter !== 'none') throw new FormProblem({ filter: 'Choose whether to low-pass filter the angles.' });
	const errors: Record<string, string> = {};
	const cutoff = numberOrNull(form.get('cutoffHz'));
	if (filter === 'lowpass' && cutoff === null) errors.cutoffHz = 'Enter the cutoff frequency in Hz (6 Hz is a common starting point).';
	const perChannel: Record<string, number> = {};
	for (const [k, v] of form.entries()) {
		if (!k.startsWith('channelCutoff.') || String(v).trim() === '') continue;
		perChannel[k.slice('channelCutoff.'.length)] = numberOrNull(v) as number;
	}
	let gravity: [number, number, number] | undefined;
	if (form.get('gravity') === 'custom') {
		const g = (['gravityX', 'gravityY', 'gravityZ'] as const).map((f) => numberOrNull(form.get(f)));
		if (g.some((x) => x === null || !Number.isFinite(x))) errors.gravity = 'Enter all three components of gravity in m/s² (lab X anterior, Y superior, Z right).';
		else gravity = g as [number, number, number];
	}
	if (Object.keys(errors).length) throw new FormProblem(errors);
	return parseRunOptions({
		cutoffHz: filter === 'none' ? null : cutoff,
		...(filter === 'lowpass' && Object.keys(perChannel).length ? { perChannelCutoffHz: perChannel } : {}),
		fillGaps: form.get('fillGaps') === 'on',
		...(form.get('endTreatment') ? { endTreatment: String(form.get('endTreatment')) } : {}),
		...(gravity ? { gravity } : {})
	});
}

// ---------------------------------------------------------------------------------------------- starting and retrying

/** Puts a queued run on the queue; when that fails the run is marked failed with the reason (never left queued). */
async function queueOrFail(runId: string, jobKey?: string): Promise<void> {
	try {
		await enqueueRun(runId, jobKey);
	} catch (err) {
		await db().query(`UPDATE runs SET state = 'failed', error = :error, finished_at = now() WHERE id = :runId AND state = 'queued'`, {
			replacements: { runId, error: `The run could not be queued for processing (${(err as Error).message}). Retry it once the job queue is back.` }
		});
	}
}

function refuseLockedSession(trial: TrialContext): void {
	refuseIfLocked(trial.sessionState);
}

/**
 * Starts a run of the trial: checks access, the trial, the options (a form, or a function reading the JSON body,
 * called only after the access check), the session lock and consent; records the run, then queues it.
 */
export async function startRun(event: RequestEvent, rawStudyId: string, rawTrialId: string, options: FormData | (() => Promise<unknown>) | Record<string, unknown>): Promise<RunView> {
	const { actor, study } = await guardStudy(event, 'run.start', rawStudyId);
	const trial = await trialIn(study.id, rawTrialId);
	refuseLockedSession(trial);
	const opts = options instanceof FormData ? runOptionsFromForm(options) : parseRunOptions(typeof options === 'function' ? await options() : options);
	const runId = await db().transaction(async (transaction) => {
		// again inside the transaction: an approval signed meanwhile wins
		await assertSessionUnlocked(trial.sessionId, transaction);
		await requireValidConsent(trial.participantId, 'run', transaction);
		const run = await Run.create(
			{ trialId: trial.trialId, state: 'queued', options: opts as unknown as Record<string, unknown>, rawSha256: trial.sha256, softwareVersion: softwareVersion(), createdBy: actor.id },
			{ transaction }
		);
		await record(
			{
				action: 'run.started',
				actorUserId: actor.id,
				actorLabel: actor.email,
				studyId: study.id,
				recordType: 'run',
				recordId: run.id,
				ipAddress: contextOf(event).ipAddress,
				details: { trialId: trial.trialId, sessionId: trial.sessionId, options: opts }
			},
			transaction
		);
		return run.id;
	});
	await queueOrFail(runId);
	return (await runRow(runId))!;
}

/** Reads a JSON request body for startRun; anything else is refused with 400 (415 for another content type). */
export function jsonBody(event: RequestEvent): () => Promise<unknown> {
	return async () => {
		const type = event.request.headers.get('content-type') ?? '';
		if (!type.includes('application/json')) throw new FormProblem({ form: 'Send the run options as JSON (content-type: application/json), e.g. {"cutoffHz": 6}.' }, 'unsupported');
		try {
			const text = await event.request.text();
			return text.trim() ? JSON.parse(text) : {};
		} catch {
			throw new FormProblem({ form: 'The request body is not valid JSON.' });
		}
	};
}

/** A person's retry of a failed run: the same run row goes back to the queue (its earlier error is cleared). */
export async function retryRun(event: RequestEvent, rawStudyId: string, rawRunId: string): Promise<RunView> {
	const { actor, study } = await guardStudy(event, 'run.start', rawStudyId);
	const { run, trial } = await runIn(study.id, rawRunId);
	refuseLockedSession(trial);
	if (run.state !== 'failed') error(409, `Only a failed run can be retried; run ${run.number} is ${run.state}.`);
	const ok = await db().transaction(async (transaction) => {
		await assertSessionUnlocked(trial.sessionId, transaction);
		await requireValidConsent(trial.participantId, 'run', transaction);
		const [rows] = (await db().query(
			`UPDATE runs SET state = 'queued', error = NULL, progress = 0, stage = NULL, started_at = NULL, finished_at = NULL WHERE id = :id AND state = 'failed' RETURNING id`,
			{ replacements: { id: run.id }, transaction }
		)) as [unknown[], unknown];
		if (!rows.length) return false;
		await record(
			{ action: 'run.retried', actorUserId: actor.id, actorLabel: actor.email, studyId: study.id, recordType: 'run', recordId: run.id, ipAddress: contextOf(event).ipAddress, details: { previousError: run.error, attempts: run.attempts } },
			transaction
		);
		return true;
	});
	// two people clicking at once: the second finds the run already queued again
	if (!ok) error(409, `Only a failed run can be retried; run ${run.number} is already queued again.`);
	await queueOrFail(run.id, `run ${run.id} retry ${randomUUID()}`);
	return (await runRow(run.id))!;
}

// ---------------------------------------------------------------------------------------------- reading results

export async function readRun(event: RequestEvent, rawStudyId: string, rawRunId: string): Promise<RunView> {
	const { study } = await guardStudy(event, 'study.read', rawStudyId);
	return (await runIn(study.id, rawRunId)).run;
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

const seriesQuery = z.object({
	quantity: z.enum(SERIES_QUANTITIES, { error: `quantity must be one of ${SERIES_QUANTITIES.join(', ')}` }).default('moment'),
	dof: z.string().trim().min(1).max(100).optional(),
	points: z.coerce.number({ error: 'points must be a whole number from 10 to 100000' }).int('points must be a whole number from 10 to 100000').min(10, 'points must be at least 10').max(100_000, 'points must be at most 100000').optional()
});

function requireDone(run: RunView): void {
	if (run.state !== 'done') error(409, `Run ${run.number} has no results yet (state: ${run.state}).`);
}

interface StoredModel {
	dofs?: { name: string; positive: string; base?: boolean }[];
	bodyMassKg?: number;
}

export interface StoredCurve {
	name: string;
	unit: string;
	component?: 'x' | 'y' | 'z';
	positive: string | null;
	/** Every sample as stored (NaN = gap). */
	values: Float64Array;
}

/**
 * The stored series of one quantity of a run (optionally of one DOF or joint) as typed arrays, in the model's DOF
 * order, with the one time axis they share. For the API's answers and for the review's own reductions.
 */
export async function storedSeries(
	runId: string,
	q: { quantity: ResultQuantity; dof?: string }
): Promise<{ time: Float64Array; curves: StoredCurve[]; bodyMassKg: number | null; edgeZone: EdgeZoneView }> {
	db();
	const rows = await RunSeries.findAll({
		where: { runId, quantity: ['time', q.quantity], ...(q.dof ? { name: ['time', q.dof] } : {}) },
		order: [['name', 'ASC']]
	});
	const run = await Run.findByPk(runId, { attributes: ['model', 'edgeZone'] });
	const model = (run?.model ?? {}) as StoredModel;
	const positive = new Map((model.dofs ?? []).map((d) => [d.name, d.positive]));
	const order = new Map((model.dofs ?? []).map((d, i) => [d.name, i]));
	const timeRow = rows.find((r) => r.quantity === 'time');
	if (!timeRow) error(409, 'This run has no stored time vector.');
	const curves: StoredCurve[] = [];
	const data = rows.filter((r) => r.quantity !== 'time').sort((a, b) => (order.get(a.name) ?? 1e9) - (order.get(b.name) ?? 1e9) || a.name.localeCompare(b.name));
	for (const r of data) {
		const all = decodeFloat64(r.data);
		for (let c = 0; c < r.components; c++) {
			curves.push({
				name: r.name,
				unit: r.unit,
				...(r.components === 3 ? { component: (['x', 'y', 'z'] as const)[c] } : {}),
				positive: positive.get(r.name) ?? null,
				values: component(all, r.components, c)
			});
		}
	}
	return { time: decodeFloat64(timeRow.data), curves, bodyMassKg: model.bodyMassKg ?? null, edgeZone: edgeZoneView(run?.edgeZone) };
}

/** The time axis of a run (s), or null when it has none. */
export async function timeOfRun(runId: string): Promise<Float64Array | null> {
	db();
	const row = await RunSeries.findOne({ where: { runId, quantity: 'time' } });
	return row ? decodeFloat64(row.data) : null;
}

/**
 * Curves of one quantity of a done run, optionally of one DOF (or joint), optionally reduced to about `points`
 * for plotting (the review's reduction: LTTB plus every bucket's minimum and maximum).
 */
export async function seriesOfRun(runId: string, q: { quantity: ResultQuantity; dof?: string; points?: number }): Promise<SeriesAnswer> {
	const { time, curves: stored, bodyMassKg, edgeZone } = await storedSeries(runId, q);
	const curves: Curve[] = stored.map(({ values, ...c }) => {
		const red = q.points ? reduceForPlot(time, values, q.points) : { t: Array.from(time), v: Array.from(values) };
		return { ...c, quantity: q.quantity, t: red.t, v: red.v.map((x) => (Number.isFinite(x) ? x : null)) };
	});
	if (q.dof && !curves.length) error(404, `This run has no ${q.quantity} series named ${q.dof}.`);
	return { runId, quantity: q.quantity, samples: time.length, points: q.points ?? null, curves, bodyMassKg, edgeZone };
}

/** GET …/series: query parameters validated (400 naming the parameter), run in study, run done. */
export async function loadSeries(event: RequestEvent, rawStudyId: string, rawRunId: string): Promise<SeriesAnswer> {
	const { study } = await guardStudy(event, 'study.read', rawStudyId);
	const { run } = await runIn(study.id, rawRunId);
	const sp = event.url.searchParams;
	const parsed = seriesQuery.safeParse({ quantity: sp.get('quantity') ?? undefined, dof: sp.get('dof') ?? undefined, points: sp.get('points') ?? undefined });
	if (!parsed.success) error(400, parsed.error.issues.map((i) => i.message).join('; '));
	requireDone(run);
	return seriesOfRun(run.id, parsed.data);
}

// ---------------------------------------------------------------------------------------------- summaries and the edge zone

/** The name of the switch, in URLs and forms: 1 includes the edge zones in peaks, summaries and repetitions. */
export const INCLUDE_EDGE_ZONES = 'includeEdgeZones';

/** The switch as pages read it: on only for 1 (or true); anything else leaves the edge zones out. */
export function includeEdgeZonesOf(sp: URLSearchParams): boolean {
	const v = sp.get(INCLUDE_EDGE_ZONES);
	return v === '1' || v === 'true';
}

/** The switch as the JSON API reads it: 1/true or 0/false (absent = 0); anything else is refused with 400. */
function includeEdgeZonesStrict(sp: URLSearchParams): boolean {
	const v = sp.get(INCLUDE_EDGE_ZONES);
	if (v === null || v === '0' || v === 'false') return false;
	if (v === '1' || v === 'true') return true;
	error(400, `${INCLUDE_EDGE_ZONES} must be 1 (include the edge zones) or 0 (leave them out, the default); got “${v.slice(0, 40)}”.`);
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

type StoredSummaryRow = Partial<Record<keyof SummaryStats, number | null>> & Pick<SummaryRow, 'dof' | 'quantity' | 'unit'> & { wholeTrial?: Partial<Record<keyof SummaryStats, number | null>> };

/**
 * The stored summary rows in the chosen scope: outside the edge zones (the rows' own figures, the default) or the
 * whole trial (`wholeTrial`). Runs stored before edge zones have one set of figures, over every sample: both scopes.
 */
export function summaryRows(stored: unknown, includeEdgeZones: boolean): SummaryView[] {
	if (!Array.isArray(stored)) return [];
	return (stored as StoredSummaryRow[]).map((r) => {
		const f = includeEdgeZones && r.wholeTrial ? r.wholeTrial : r;
		const n = (x: number | null | undefined) => (typeof x === 'number' && Number.isFinite(x) ? x : null);
		return {
			dof: r.dof,
			quantity: r.quantity,
			unit: r.unit,
			peakPositive: n(f.peakPositive),
			peakPositiveTime: n(f.peakPositiveTime),
			peakNegative: n(f.peakNegative),
			peakNegativeTime: n(f.peakNegativeTime),
			range: n(f.range),
			mean: n(f.mean),
			samples: n(f.samples)
		};
	});
}

/** What a summary's figures cover, in words. */
export function summaryScope(edgeZone: EdgeZoneView, includeEdgeZones: boolean): string {
	if (!edgeZone.computed) return 'every sample (the run was made before edge zones were introduced: its edge zone was not computed)';
	return includeEdgeZones ? 'every sample, edge zones included' : 'the samples outside the edge zones (the first and last stretches where results are not reliable)';
}

/** GET …/runs/[rid]/summary[?includeEdgeZones=1]: peaks, range and mean per DOF, without the edge zones unless asked. */
export async function loadSummary(event: RequestEvent, rawStudyId: string, rawRunId: string) {
	const { study } = await guardStudy(event, 'study.read', rawStudyId);
	const { run } = await runIn(study.id, rawRunId);
	const include = includeEdgeZonesStrict(event.url.searchParams);
	requireDone(run);
	const row = await Run.findByPk(run.id, { attributes: ['summary', 'model', 'edgeZone'] });
	const model = (row?.model ?? {}) as StoredModel;
	const edgeZone = edgeZoneView(row?.edgeZone);
	return {
		runId: run.id,
		convention: 'Internal joint moments: the moment the proximal segment exerts on the distal one; positive in the DOF’s positive sense.',
		bodyMassKg: model.bodyMassKg ?? null,
		edgeZone,
		edgeZonesIncluded: include,
		scope: summaryScope(edgeZone, include),
		summary: summaryRows(row?.summary, include)
	};
}

/** Everything the results page shows: the run, its trial, provenance, summary and the moment curves. */
export async function loadRunPage(event: RequestEvent, rawStudyId: string, rawRunId: string) {
	const { actor, study } = await guardStudy(event, 'study.read', rawStudyId);
	const { run, trial } = await runIn(study.id, rawRunId);
	const row = await Run.findByPk(run.id, { attributes: ['summary', 'model', 'edgeZone'] });
	const done = run.state === 'done';
	const include = includeEdgeZonesOf(event.url.searchParams);
	const edgeZone = edgeZoneView(row?.edgeZone);
	return {
		study: { id: study.id, code: study.code, title: study.title },
		trial: { id: trial.trialId, fileName: trial.fileName, sessionId: trial.sessionId, participantCode: trial.participantCode, sampleHz: trial.sampleHz },
		run,
		canStart: may(actor, 'run.start', study.id),
		summary: done ? summaryRows(row?.summary, include) : [],
		includeEdgeZones: include,
		summaryScope: summaryScope(edgeZone, include),
		edgeZone: done ? edgeZone : null,
		model: done ? (row?.model ?? null) : null,
		moments: done ? await seriesOfRun(run.id, { quantity: 'moment', points: 600 }) : null
	};
}

/** The moment curves of the newest done run of each trial of a session (for the session page's first plot). */
export async function latestMomentsBySession(sessionId: string, points = 400): Promise<Record<string, SeriesAnswer>> {
	const rows = await db().query<{ trial_id: string; id: string }>(
		`SELECT DISTINCT ON (r.trial_id) r.trial_id, r.id FROM runs r JOIN trials t ON t.id = r.trial_id
		 WHERE t.session_id = :sessionId AND r.state = 'done' ORDER BY r.trial_id, r.created_at DESC, r.id DESC`,
		{ replacements: { sessionId }, type: QueryTypes.SELECT }
	);
	const out: Record<string, SeriesAnswer> = {};
	for (const r of rows) out[r.trial_id] = await seriesOfRun(r.id, { quantity: 'moment', points });
	return out;
}

// ---------------------------------------------------------------------------------------------- residual analysis

export interface ChannelResidual {
	channel: string;
	cutoffs: number[];
	residuals: number[];
	suggestedHz: number | null;
	noiseLine: { slope: number; intercept: number } | null;
	/** Why no suggestion could be made for this channel. */
	problem: string | null;
}

function problemText(p: Problem[]): string {
	return p
		.filter((x) => x.severity === 'error')
		.slice(0, 5)
		.map((x) => `${x.file}${x.row ? ` row ${x.row}` : ''}${x.column ? `, column “${x.column}”` : ''}: ${x.message}`)
		.join(' ');
}

async function readRecording(trial: { rawUploadId: string; fileName: string; mapping: unknown; sha256: string }, built: ReturnType<typeof buildSessionModel>, fillGaps: boolean): Promise<Recording> {
	const mapping = trial.mapping ? columnMappingSchema.parse(trial.mapping) : undefined;
	const parsed = await parseRecording(readRaw(trial.rawUploadId, { expectSha256: trial.sha256 }), { fileName: trial.fileName, expected: built.expected, mapping, fillGaps });
	if (!parsed.ok) throw new RunFailure(`The recording could not be read: ${problemText(parsed.problems)}`);
	return parsed.recording;
}

/**
 * Residual analysis of every channel of a trial (computed on request from the raw bytes): the residual against
 * cutoff, the noise line and the suggested cutoff, so a person can choose the cutoff of a run.
 */
export async function trialResiduals(trial: TrialContext, fillGaps: boolean): Promise<{ sampleHz: number; channels: ChannelResidual[] }> {
	let built: ReturnType<typeof buildSessionModel>;
	let rec: Recording;
	try {
		built = buildSessionModel(await participantBody(trial.participantId), sessionSetupSchema.parse(trial.setup));
		rec = await readRecording(trial, built, fillGaps);
	} catch (err) {
		error(422, (err as Error).message);
	}
	const channels = rec.channels.map((c): ChannelResidual => {
		if (c.values.some((v) => Number.isNaN(v))) {
			return { channel: c.name, cutoffs: [], residuals: [], suggestedHz: null, noiseLine: null, problem: 'This channel has gaps; tick “fill short gaps” to analyse it.' };
		}
		try {
			const r = residualAnalysis(c.values, rec.sampleHz);
			return { channel: c.name, ...r, problem: null };
		} catch (err) {
			return { channel: c.name, cutoffs: [], residuals: [], suggestedHz: null, noiseLine: null, problem: (err as Error).message };
		}
	});
	return { sampleHz: rec.sampleHz, channels };
}

/** The trial page: trial, its runs, and (when asked) residual analysis per channel. */
export async function loadTrialPage(event: RequestEvent, rawStudyId: string, rawTrialId: string) {
	const { actor, study } = await guardStudy(event, 'study.read', rawStudyId);
	const trial = await trialIn(study.id, rawTrialId);
	const runs = (await listRunsForSession(trial.sessionId)).filter((r) => r.trialId === trial.trialId);
	const wantResiduals = event.url.searchParams.get('residuals') === '1';
	const fillGaps = event.url.searchParams.get('fillGaps') === 'on';
	return {
		study: { id: study.id, code: study.code, title: study.title },
		trial: { id: trial.trialId, fileName: trial.fileName, sessionId: trial.sessionId, participantCode: trial.participantCode, sampleHz: trial.sampleHz, channels: trial.channels, sessionState: trial.sessionState },
		runs,
		canStart: may(actor, 'run.start', study.id),
		residuals: wantResiduals ? await trialResiduals(trial, fillGaps) : null,
		fillGaps
	};
}

/** GET /api/…/trials/[tid]/residuals */
export async function loadResiduals(event: RequestEvent, rawStudyId: string, rawTrialId: string) {
	const { study } = await guardStudy(event, 'study.read', rawStudyId);
	const trial = await trialIn(study.id, rawTrialId);
	return { trialId: trial.trialId, ...(await trialResiduals(trial, event.url.searchParams.get('fillGaps') === 'on')) };
}

/** The session page a trial belongs to (where forms about its runs send people back to). */
export async function sessionOfTrial(rawStudyId: string, rawTrialId: string): Promise<string | null> {
	if (!isUuid(rawTrialId) || !isUuid(rawStudyId)) return null;
	const rows = await db().query<{ id: string }>(`SELECT s.id FROM trials t JOIN sessions s ON s.id = t.session_id WHERE t.id = :t AND s.study_id = :s`, {
		replacements: { t: rawTrialId.toLowerCase(), s: rawStudyId.toLowerCase() },
		type: QueryTypes.SELECT
	});
	return rows[0]?.id ?? null;
}

// ---------------------------------------------------------------------------------------------- processing (worker side)

/** A failure that another attempt would repeat (consent, an unreadable file, an impossible model): no retry. */
export class RunFailure extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'RunFailure';
	}
}

/** How the computation of a run is done: in a worker thread (the worker; keeps progress flowing) or inline (seed, tests). */
export type ComputeMode = 'thread' | 'inline';

function computeInThread(input: RunThreadInput, onProgress: (fraction: number, stage: string) => void): Promise<ComputedRun> {
	// the thread loads TypeScript through tsx like the worker itself; the path is built at run time so the app's
	// bundler does not try to bundle the thread (the app never processes runs)
	// (Node 20 does not pass the parent's tsx loader on to threads: the plain .mjs entry registers it)
	const file = ['run-thread-boot', 'mjs'].join('.');
	const url = new URL(`../jobs/${file}`, import.meta.url);
	return new Promise((resolve, reject) => {
		const w = new Worker(url, { workerData: input });
		let settled = false;
		w.on('message', (m: RunThreadMessage) => {
			if (m.type === 'progress') onProgress(m.fraction, m.stage);
			else if (m.type === 'done') {
				settled = true;
				for (const s of m.computed.series) s.data = Buffer.from(s.data.buffer, s.data.byteOffset, s.data.byteLength);
				resolve(m.computed);
			} else {
				settled = true;
				const deterministic = ['SessionModelError', 'ScalingError', 'SignalError', 'PipelineError', 'ZodError'].includes(m.name);
				reject(deterministic ? new RunFailure(m.message) : new Error(m.message));
			}
		});
		w.on('error', (err) => {
			if (!settled) reject(err);
			settled = true;
		});
		w.on('exit', (code) => {
			if (!settled) reject(new Error(`the computation stopped unexpectedly (exit code ${code})`));
			settled = true;
		});
	});
}

function computeInline(input: RunThreadInput, onProgress: (fraction: number, stage: string) => void): ComputedRun {
	try {
		return computeRun(input.body, input.setup, input.recording, input.options, onProgress);
	} catch (err) {
		const name = (err as Error).name;
		if (['SessionModelError', 'ScalingError', 'SignalError', 'PipelineError', 'ZodError'].includes(name)) throw new RunFailure((err as Error).message);
		throw err;
	}
}

/** Progress writes at most every 250 ms, one at a time, and only for the attempt that still owns the run. */
function progressWriter(runId: string, attempt: number) {
	let last = 0;
	let pending: { fraction: number; stage: string } | null = null;
	let writing: Promise<void> | null = null;
	const flush = async () => {
		while (pending) {
			const p = pending;
			pending = null;
			await db().query(`UPDATE runs SET progress = :progress, stage = :stage WHERE id = :runId AND attempts = :attempt AND state = 'running'`, {
				replacements: { runId, attempt, progress: Math.min(0.99, Math.max(0, p.fraction)), stage: p.stage.slice(0, 200) }
			});
		}
		writing = null;
	};
	return {
		update(fraction: number, stage: string) {
			const now = Date.now();
			pending = { fraction, stage };
			if (now - last < 250 && fraction < 1) return;
			last = now;
			writing ??= flush().catch(() => {
				writing = null;
			});
		},
		async settle() {
			await writing;
		}
	};
}

export interface ProcessOutcome {
	state: 'done' | 'failed' | 'retrying' | 'skipped';
	attempt: number;
	error?: string;
	timings?: Record<string, number>;
}

/**
 * Processes one run (the worker's job handler; the seed calls it inline). Safe to run twice and after a crash:
 * a done run is left alone; the results are written in one transaction that first deletes any earlier rows of
 * the run, and only by the attempt that still owns the run. `job` is pg-boss' retry count and limit: a transient
 * error before the last attempt leaves the run queued (and rethrows so pg-boss retries); otherwise it fails.
 */
export async function processRun(
	runId: string,
	job: { retryCount: number; retryLimit: number } = { retryCount: 0, retryLimit: 0 },
	opts: { mode?: ComputeMode } = {}
): Promise<ProcessOutcome> {
	const sequelize = db();
	const trial = await trialOfRun(runId);
	if (!trial) return { state: 'skipped', attempt: 0 };
	const [claimed] = (await sequelize.query(
		`UPDATE runs SET state = 'running', attempts = attempts + 1, started_at = now(), finished_at = NULL, progress = 0, stage = 'checking consent', error = NULL
		 WHERE id = :runId AND state <> 'done' RETURNING attempts, options`,
		{ replacements: { runId } }
	)) as [{ attempts: number; options: unknown }[], unknown];
	if (!claimed.length) return { state: 'skipped', attempt: 0 };
	const attempt = claimed[0].attempts;
	const progress = progressWriter(runId, attempt);
	try {
		try {
			await requireValidConsent(trial.participantId, 'run');
		} catch (err) {
			if (isHttpError(err)) throw new RunFailure(err.body.message);
			throw err;
		}
		const options = (() => {
			const r = storedRunOptions(claimed[0].options);
			if (!r.success) throw new RunFailure(`The run's options are not valid: ${r.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ')}`);
			return r.data;
		})();
		const setupParsed = sessionSetupSchema.safeParse(trial.setup);
		if (!setupParsed.success) throw new RunFailure(`The session's model set-up is not valid: ${setupParsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ')}`);
		const setup: SessionSetup = setupParsed.data;
		const body = await participantBody(trial.participantId);
		let built: ReturnType<typeof buildSessionModel>;
		try {
			built = buildSessionModel(body, setup);
		} catch (err) {
			throw new RunFailure(`The model could not be built: ${(err as Error).message}`);
		}
		progress.update(0.01, 'reading the recording');
		const recording = await readRecording(trial, built, options.fillGaps);
		const input: RunThreadInput = { body, setup, recording, options };
		const onProgress = (f: number, stage: string) => progress.update(0.02 + 0.93 * f, stage);
		const computed = (opts.mode ?? 'thread') === 'thread' ? await computeInThread(input, onProgress) : computeInline(input, onProgress);
		await progress.settle();
		progress.update(0.96, 'storing results');
		await progress.settle();
		const stored = await storeResults(runId, attempt, trial.participantId, computed);
		if (!stored.ok) return { state: 'skipped', attempt, error: stored.reason };
		return { state: 'done', attempt, timings: computed.timings };
	} catch (err) {
		await progress.settle();
		const msg = isHttpError(err) ? err.body.message : (err as Error).message || String(err);
		const final = err instanceof RunFailure || job.retryCount >= job.retryLimit;
		if (final) {
			await sequelize.query(`UPDATE runs SET state = 'failed', error = :error, finished_at = now(), stage = NULL WHERE id = :runId AND attempts = :attempt AND state <> 'done'`, {
				replacements: { runId, attempt, error: msg.slice(0, 4000) }
			});
			return { state: 'failed', attempt, error: msg };
		}
		await sequelize.query(`UPDATE runs SET state = 'queued', progress = 0, stage = NULL, error = :error WHERE id = :runId AND attempts = :attempt AND state <> 'done'`, {
			replacements: { runId, attempt, error: `Attempt ${attempt} failed (${msg.slice(0, 2000)}); it will be tried again automatically.` }
		});
		throw err;
	}
}

/**
 * Writes a run's results all or nothing: locks the run, checks consent again (a withdrawal during processing
 * wins), deletes any earlier rows of the run, inserts every series, and marks it done.
 */
export async function storeResults(runId: string, attempt: number, participantId: string, computed: ComputedRun): Promise<{ ok: true } | { ok: false; reason: string }> {
	const sequelize = db();
	return sequelize.transaction(async (transaction) => {
		const [rows] = (await sequelize.query(`SELECT state, attempts FROM runs WHERE id = :runId FOR UPDATE`, { replacements: { runId }, transaction })) as [
			{ state: RunState; attempts: number }[],
			unknown
		];
		const row = rows[0];
		if (!row || row.state !== 'running' || row.attempts !== attempt) return { ok: false as const, reason: 'another attempt owns this run' };
		try {
			await requireValidConsent(participantId, 'run', transaction);
		} catch (err) {
			if (isHttpError(err)) throw new RunFailure(err.body.message);
			throw err;
		}
		await writeResults(runId, computed, transaction);
		await record({ action: 'run.finished', actorLabel: 'worker', recordType: 'run', recordId: runId, details: { attempt, series: computed.series.length, timings: computed.timings } }, transaction);
		return { ok: true as const };
	});
}

/** Inside the caller's transaction: replaces the run's series by these and marks it done with its summary and model. */
export async function writeResults(runId: string, computed: ComputedRun, transaction: Transaction): Promise<void> {
	// a done run holds finite numbers only: anything else fails the run (no retry would change it), nothing written
	try {
		assertStorable(computed);
	} catch (err) {
		throw new RunFailure((err as Error).message);
	}
	const sequelize = db();
	await RunSeries.destroy({ where: { runId }, transaction });
	// one insert per series with bind parameters, so pg sends the bytes as binary (not as hex text twice their size)
	for (const s of computed.series as SeriesRow[]) {
		await sequelize.query('INSERT INTO run_series (run_id, name, quantity, unit, components, data) VALUES ($1, $2, $3, $4, $5, $6)', {
			bind: [runId, s.name, s.quantity, s.unit, s.components, s.data],
			type: QueryTypes.INSERT,
			transaction
		});
	}
	await sequelize.query(
		`UPDATE runs SET state = 'done', progress = 1, stage = NULL, error = NULL, finished_at = now(), summary = CAST(:summary AS jsonb), model = CAST(:model AS jsonb),
		        edge_zone = CAST(:edgeZone AS jsonb) WHERE id = :runId`,
		{ replacements: { runId, summary: JSON.stringify(computed.summary), model: JSON.stringify(computed.model), edgeZone: JSON.stringify(computed.edgeZone) }, transaction }
	);
}

/**
 * A job that ran out of attempts without its handler finishing (the worker vanished on the last attempt):
 * the run is marked failed so that a person can retry it, unless a newer job for it is still pending.
 */
export async function abandonRun(runId: string): Promise<void> {
	await db().query(
		`UPDATE runs SET state = 'failed', finished_at = now(), stage = NULL,
		   error = 'Processing stopped before it finished (the worker was stopped or lost) on every attempt. Retry the run.'
		 WHERE id = :runId AND state IN ('queued', 'running')
		   AND NOT EXISTS (SELECT 1 FROM jobs.job j WHERE j.name = 'run-process' AND j.data->>'runId' = :runId AND j.state IN ('created', 'retry', 'active'))`,
		{ replacements: { runId } }
	);
}

