// Processing runs of trials as people see them: starting one (guarded, consent-checked, queued), retries, and
// reading results for the API and the pages. The worker's side is in process.ts. Services take (actor, ctx, input)
// and throw domain errors; no SvelteKit here.
import { execFileSync } from 'node:child_process';
import { randomUUID } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { fn, type Transaction } from 'sequelize';
import { z } from 'zod';
import { db } from '../db/index';
import { Run, RunSeries } from '../db/models';
import { DomainError, FormProblem, conflict, notFound } from '../errors';
import { record } from '../audit/record';
import { requireValidConsent } from '../consent/check';
import { enqueueRun, runJobId } from '../jobs/queue';
import { assertSessionUnlocked, refuseIfLocked } from '../sessions/lock';
import { isUuid, may, studyFor, type Actor, type StudyAction } from '../access/guard';
import type { RequestContext } from '../access/context';
import { component, decodeFloat64 } from './results-codec';
import { participantBody, readAngleFile, readForces, readRecording } from './process';
import { groundAtAngleRate } from './compute';
import { contactIds } from '../../processing/foot-contacts';
import {
	latestDoneRunPerTrial,
	runRowById,
	runRowsOfSession,
	sessionIdOfTrial,
	trialContextInStudy,
	trialContextOfRun,
	type RunRow,
	type TrialContext
} from './queries';
import { reduceForPlot } from '../../processing/reduce';
import { buildSessionModel, sessionSetupSchema } from '../../processing/session-model';
import type { StoredSummaryRow } from '../db/run-json';
import { runOptionsSchema, type RunOptions } from '../../processing/pipeline';
import { edgeZoneView, type EdgeZoneView } from '../../processing/zone-exclusion';
import type { Recording } from '../../processing/recording';
import { residualAnalysis } from '../../processing/signal';
import {
	SERIES_QUANTITIES,
	type ChannelResidual,
	type Curve,
	type ResultQuantity,
	type RunView,
	type SeriesAnswer,
	type SummaryAnswer,
	type SummaryView,
	type TrialResiduals
} from '../../types/runs';

export { SERIES_QUANTITIES, type ChannelResidual, type Curve, type ResultQuantity, type RunView, type SeriesAnswer, type SummaryView };

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
			commit = execFileSync('git', ['rev-parse', '--short=12', 'HEAD'], { stdio: ['ignore', 'pipe', 'ignore'], timeout: 3_000 })
				.toString()
				.trim();
			const dirty = execFileSync('git', ['status', '--porcelain', '--untracked-files=no', '--', 'src'], {
				stdio: ['ignore', 'pipe', 'ignore'],
				timeout: 3_000
			})
				.toString()
				.trim();
			if (commit && dirty) commit += '.modified';
		} catch {
			commit = '';
		}
	}
	version = /^[0-9a-f]{7,40}(\.modified)?$/.test(commit) ? `${v}+${commit}` : v;
	return version;
}

// ---------------------------------------------------------------------------------------------- views

const iso = (d: Date | null) => (d ? new Date(d).toISOString() : null);
const viewOf = (r: RunRow): RunView => ({
	...r,
	number: Number(r.number),
	progress: Number(r.progress),
	createdAt: iso(r.createdAt)!,
	startedAt: iso(r.startedAt),
	finishedAt: iso(r.finishedAt)
});

/** Every run of the session's trials, oldest first (the caller has checked access to the session). */
export async function listRunsForSession(sessionId: string): Promise<RunView[]> {
	return (await runRowsOfSession(sessionId)).map(viewOf);
}

async function runView(runId: string): Promise<RunView> {
	const row = await runRowById(runId);
	if (!row) throw notFound();
	return viewOf(row);
}

// ---------------------------------------------------------------------------------------------- records in a study

/** The trial of the study in the URL; another study's trial, or a malformed id, is not found. */
async function trialIn(studyId: string, rawTrialId: string): Promise<TrialContext> {
	const trial = isUuid(rawTrialId) ? await trialContextInStudy(rawTrialId.toLowerCase(), studyId) : null;
	if (!trial) throw notFound();
	return trial;
}

/** The run of the study in the URL, with its trial; not found otherwise. */
export async function runIn(studyId: string, rawRunId: string): Promise<{ run: RunView; trial: TrialContext }> {
	const trial = isUuid(rawRunId) ? await trialContextOfRun(rawRunId.toLowerCase()) : null;
	if (!trial || trial.studyId !== studyId) throw notFound();
	return { run: await runView(trial.runId), trial };
}

/** Guards the action on the study and finds the run in it. */
async function guardedRun(actor: Actor | null, ctx: RequestContext, action: StudyAction, input: { studyId: string; runId: string }) {
	const { actor: a, study } = await studyFor(actor, ctx, action, input.studyId);
	return { actor: a, study, ...(await runIn(study.id, input.runId)) };
}

/** Guards the action on the study and finds the trial in it. */
async function guardedTrial(actor: Actor | null, ctx: RequestContext, action: StudyAction, input: { studyId: string; trialId: string }) {
	const { actor: a, study } = await studyFor(actor, ctx, action, input.studyId);
	return { actor: a, study, trial: await trialIn(study.id, input.trialId) };
}

// ---------------------------------------------------------------------------------------------- options from forms and JSON

/** Field errors of run options, keyed as the form's fields are named. */
function optionProblems(issues: z.core.$ZodIssue[]): Record<string, string> {
	const out: Record<string, string> = {};
	for (const i of issues) {
		const k = i.path[0] === 'perChannelCutoffHz' ? `channelCutoff.${String(i.path[1] ?? '')}` : String(i.path[0] ?? 'form');
		if (i.path[0] === 'contactFeet' && i.path.length > 1)
			out[k] ??= `contactFeet["${String(i.path[1])}"]: the foot must be "left", "right" or null (no foot).`;
		else out[k] ??= i.message;
	}
	return out;
}

/** Validates run options (a JSON body or the parsed form); throws FormProblem(400) with field messages. */
export function parseRunOptions(input: unknown): RunOptions {
	const r = runOptionsSchema.safeParse(input);
	if (!r.success) throw new FormProblem(optionProblems(r.error.issues));
	return r.data;
}

const numberOrNull = (v: FormDataEntryValue | null) =>
	v === null || String(v).trim() === '' ? null : Number(String(v).trim().replace(',', '.'));

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
		if (g.some((x) => x === null || !Number.isFinite(x)))
			errors.gravity = 'Enter all three components of gravity in m/s² (lab X anterior, Y superior, Z right).';
		else gravity = g as [number, number, number];
	}
	// force-plate options: only offered (and sent) for a trial with a force recording
	let force: { forceCutoffHz?: number | null; useFlaggedContacts: boolean } | null = null;
	const forceCutoff = form.get('forceCutoff');
	if (forceCutoff !== null) {
		force = { useFlaggedContacts: form.get('useFlaggedContacts') === 'on' };
		if (forceCutoff === 'none') force.forceCutoffHz = null;
		else if (forceCutoff === 'custom') {
			const hz = numberOrNull(form.get('forceCutoffHz'));
			if (hz === null) errors.forceCutoffHz = 'Enter the cutoff for the forces in Hz, or choose “same as the angles”.';
			else force.forceCutoffHz = hz;
		} else if (forceCutoff !== 'same') errors.forceCutoff = 'Choose how the forces are filtered.';
	}
	if (Object.keys(errors).length) throw new FormProblem(errors);
	return parseRunOptions({
		...(force ?? {}),
		cutoffHz: filter === 'none' ? null : cutoff,
		...(filter === 'lowpass' && Object.keys(perChannel).length ? { perChannelCutoffHz: perChannel } : {}),
		fillGaps: form.get('fillGaps') === 'on',
		...(form.get('endTreatment') ? { endTreatment: String(form.get('endTreatment')) } : {}),
		...(gravity ? { gravity } : {})
	});
}

/** Reads a JSON request body (for startRun, after the access check); anything else is refused (415 for another content type). */
export function jsonBody(request: Request): () => Promise<unknown> {
	return async () => {
		const type = request.headers.get('content-type') ?? '';
		if (!type.includes('application/json'))
			throw new FormProblem(
				{ form: 'Send the run options as JSON (content-type: application/json), e.g. {"cutoffHz": 6}.' },
				'unsupported'
			);
		try {
			const text = await request.text();
			return text.trim() ? JSON.parse(text) : {};
		} catch {
			throw new FormProblem({ form: 'The request body is not valid JSON.' });
		}
	};
}

// ---------------------------------------------------------------------------------------------- starting and retrying

/** The audit event of a person's action on a run of the study (inside the change's transaction). */
export function recordRunAction(
	actor: Actor,
	ctx: RequestContext,
	e: { action: string; studyId: string; runId: string; details: Record<string, unknown> },
	transaction: Transaction
): Promise<unknown> {
	return record(
		{
			action: e.action,
			actorUserId: actor.id,
			actorLabel: actor.email,
			studyId: e.studyId,
			recordType: 'run',
			recordId: e.runId,
			ipAddress: ctx.ipAddress,
			details: e.details
		},
		transaction
	);
}

/** Puts a queued run on the queue; when that fails the run is marked failed with the reason (never left queued). */
async function queueOrFail(runId: string, jobKey?: string): Promise<void> {
	try {
		await Run.update({ jobId: runJobId(runId, jobKey) }, { where: { id: runId } });
		await enqueueRun(runId, jobKey);
	} catch (err) {
		const error = `The run could not be queued for processing (${(err as Error).message}). Retry it once the job queue is back.`;
		await Run.update({ state: 'failed', error, finishedAt: fn('now') }, { where: { id: runId, state: 'queued' } });
	}
}

/** Re-checks, inside the change's transaction, what a start or a retry needs: an unlocked session (an approval signed meanwhile wins) and valid consent. */
async function mayProcess(trial: TrialContext, transaction: Transaction): Promise<void> {
	await assertSessionUnlocked(trial.sessionId, transaction);
	await requireValidConsent(trial.participantId, 'run', transaction);
}

/**
 * The feet set by hand (contactFeet) checked when a run starts: the trial must have a force recording, each id must
 * be `<plate>#<k>` of one of its plates and, the contacts being found here as the run will find them (the same force
 * cutoff), name one of them; FormProblem (400) under contactFeet naming the id and the contacts there are. When the
 * recordings cannot be read now the run starts and fails with the reading's reason, and the ids are checked when it
 * finds the contacts.
 */
async function checkContactFeet(trial: TrialContext, opts: RunOptions): Promise<void> {
	const ids = Object.keys(opts.contactFeet ?? {});
	if (!ids.length) return;
	const refuse = (message: string) => {
		throw new FormProblem({ contactFeet: message });
	};
	if (!trial.forceRawUploadId)
		refuse(`Trial ${trial.fileName} has no force recording, so it has no foot contacts; remove contactFeet (${ids.join(', ')}).`);
	const plates = trial.forcePlates ?? [];
	for (const id of ids) {
		const m = /^(.+)#(\d+)$/.exec(id);
		if (!m || !plates.includes(m[1]))
			refuse(
				`contactFeet: "${id}" is not a contact of trial ${trial.fileName}: a contact is named <plate>#<k> (k from 0 in time order) with a plate of its force file (${plates.join(', ')}).`
			);
	}
	let known: string[];
	try {
		const built = buildSessionModel(await participantBody(trial.participantId), sessionSetupSchema.parse(trial.setup));
		const angleFile = await readAngleFile(trial, built, opts.fillGaps);
		const force = await readForces(trial, angleFile);
		if (!force) return;
		known = contactIds(groundAtAngleRate(angleFile.recording, force, opts).contacts);
	} catch {
		// the recordings or the model cannot be used now: the run itself fails with the reason (RunFailure, the model's
		// or the plates' own errors), and the ids are checked by the run when it finds the contacts (assignContacts)
		return;
	}
	const unknown = ids.filter((id) => !known.includes(id));
	if (unknown.length)
		refuse(
			`contactFeet: ${unknown.map((id) => `"${id}"`).join(', ')} ${unknown.length === 1 ? 'is not a contact' : 'are not contacts'} of trial ${trial.fileName}; at this force cutoff its contacts are ${known.length ? known.join(', ') : 'none'}.`
		);
}

export interface StartRunInput {
	studyId: string;
	trialId: string;
	/** The "New run" form, a function reading the JSON body (called only after the access check), or the options object. */
	options: FormData | (() => Promise<unknown>) | Record<string, unknown>;
}

/** Starts a run of the trial: checks access, the trial, the options, the session lock and consent; records the run, then queues it. */
export async function startRun(actor: Actor | null, ctx: RequestContext, input: StartRunInput): Promise<RunView> {
	const { actor: a, study, trial } = await guardedTrial(actor, ctx, 'run.start', input);
	refuseIfLocked(trial.sessionState);
	const options = input.options;
	const opts =
		options instanceof FormData ? runOptionsFromForm(options) : parseRunOptions(typeof options === 'function' ? await options() : options);
	await checkContactFeet(trial, opts);
	const runId = await db().transaction(async (transaction) => {
		await mayProcess(trial, transaction);
		const run = await Run.create(
			{
				trialId: trial.trialId,
				state: 'queued',
				options: opts,
				rawSha256: trial.sha256,
				softwareVersion: softwareVersion(),
				createdBy: a.id
			},
			{ transaction }
		);
		await recordRunAction(
			a,
			ctx,
			{
				action: 'run.started',
				studyId: study.id,
				runId: run.id,
				details: { trialId: trial.trialId, sessionId: trial.sessionId, options: opts }
			},
			transaction
		);
		return run.id;
	});
	await queueOrFail(runId);
	return runView(runId);
}

/** A person's retry of a failed run: the same run row goes back to the queue (its earlier error is cleared). */
export async function retryRun(actor: Actor | null, ctx: RequestContext, input: { studyId: string; runId: string }): Promise<RunView> {
	const { actor: a, study, run, trial } = await guardedRun(actor, ctx, 'run.start', input);
	refuseIfLocked(trial.sessionState);
	if (run.state !== 'failed') throw conflict(`Only a failed run can be retried; run ${run.number} is ${run.state}.`);
	const ok = await db().transaction(async (transaction) => {
		await mayProcess(trial, transaction);
		const [changed] = await Run.update(
			{ state: 'queued', error: null, progress: 0, stage: null, startedAt: null, finishedAt: null },
			{ where: { id: run.id, state: 'failed' }, transaction }
		);
		if (!changed) return false;
		await recordRunAction(
			a,
			ctx,
			{ action: 'run.retried', studyId: study.id, runId: run.id, details: { previousError: run.error, attempts: run.attempts } },
			transaction
		);
		return true;
	});
	// two people clicking at once: the second finds the run already queued again
	if (!ok) throw conflict(`Only a failed run can be retried; run ${run.number} is already queued again.`);
	await queueOrFail(run.id, `run ${run.id} retry ${randomUUID()}`);
	return runView(run.id);
}

// ---------------------------------------------------------------------------------------------- reading results

type RunRef = { studyId: string; runId: string };
/** A run in the URL with the request's query parameters. */
type RunQuery = RunRef & { query: URLSearchParams };

/** GET …/runs/[rid]: one run's state and progress. */
export async function readRun(actor: Actor | null, ctx: RequestContext, input: RunRef): Promise<RunView> {
	return (await guardedRun(actor, ctx, 'study.read', input)).run;
}

const invalid = (issues: { message: string }[]) => new DomainError('invalid', issues.map((i) => i.message).join('; '));

const seriesQuery = z.object({
	quantity: z.enum(SERIES_QUANTITIES, { error: `quantity must be one of ${SERIES_QUANTITIES.join(', ')}` }).default('moment'),
	dof: z.string().trim().min(1).max(100).optional(),
	points: z.coerce
		.number({ error: 'points must be a whole number from 10 to 100000' })
		.int('points must be a whole number from 10 to 100000')
		.min(10, 'points must be at least 10')
		.max(100_000, 'points must be at most 100000')
		.optional()
});

function requireDone(run: RunView): void {
	if (run.state !== 'done') throw conflict(`Run ${run.number} has no results yet (state: ${run.state}).`);
}

/**
 * A run's stored summary, model record (as stored, and the fields results read) and edge zone, as the Run model reads
 * them back; for no run (null), or a run without results, an empty summary and an edge zone not computed.
 */
export async function storedResultsOf(runId: string | null) {
	const row = runId ? await Run.findByPk(runId, { attributes: ['summary', 'model', 'edgeZone'] }) : null;
	return {
		summary: row?.summary ?? null,
		model: row?.model ?? null,
		modelFields: row?.modelFields ?? {},
		edgeZone: edgeZoneView(row?.edgeZone)
	};
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
	const rows = await RunSeries.findAll({
		where: { runId, quantity: ['time', q.quantity], ...(q.dof ? { name: ['time', q.dof] } : {}) },
		order: [['name', 'ASC']]
	});
	const { modelFields: model, edgeZone } = await storedResultsOf(runId);
	const positive = new Map((model.dofs ?? []).map((d) => [d.name, d.positive]));
	const order = new Map((model.dofs ?? []).map((d, i) => [d.name, i]));
	const timeRow = rows.find((r) => r.quantity === 'time');
	if (!timeRow) throw conflict('This run has no stored time vector.');
	const curves: StoredCurve[] = [];
	const data = rows
		.filter((r) => r.quantity !== 'time')
		.sort((a, b) => (order.get(a.name) ?? 1e9) - (order.get(b.name) ?? 1e9) || a.name.localeCompare(b.name));
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
	return { time: decodeFloat64(timeRow.data), curves, bodyMassKg: model.bodyMassKg ?? null, edgeZone };
}

/** The time axis of a run (s), or null when it has none. */
export async function timeOfRun(runId: string): Promise<Float64Array | null> {
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
	if (q.dof && !curves.length) throw notFound(`This run has no ${q.quantity} series named ${q.dof}.`);
	return { runId, quantity: q.quantity, samples: time.length, points: q.points ?? null, curves, bodyMassKg, edgeZone };
}

/** GET …/series: query parameters validated (invalid, naming the parameter), run in study, run done. */
export async function loadSeries(actor: Actor | null, ctx: RequestContext, input: RunQuery): Promise<SeriesAnswer> {
	const { run } = await guardedRun(actor, ctx, 'study.read', input);
	const sp = input.query;
	const parsed = seriesQuery.safeParse({
		quantity: sp.get('quantity') ?? undefined,
		dof: sp.get('dof') ?? undefined,
		points: sp.get('points') ?? undefined
	});
	if (!parsed.success) throw invalid(parsed.error.issues);
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

/** The switch as the JSON API reads it: 1/true or 0/false (absent = 0); anything else is refused as invalid. */
function includeEdgeZonesStrict(sp: URLSearchParams): boolean {
	const v = sp.get(INCLUDE_EDGE_ZONES);
	if (v === null || v === '0' || v === 'false') return false;
	if (v === '1' || v === 'true') return true;
	throw new DomainError(
		'invalid',
		`${INCLUDE_EDGE_ZONES} must be 1 (include the edge zones) or 0 (leave them out, the default); got “${v.slice(0, 40)}”.`
	);
}

/**
 * The stored summary rows in the chosen scope: outside the edge zones (the rows' own figures, the default) or the
 * whole trial (`wholeTrial`). Runs stored before edge zones have one set of figures, over every sample: both scopes.
 */
export function summaryRows(stored: StoredSummaryRow[] | null, includeEdgeZones: boolean): SummaryView[] {
	return (stored ?? []).map((r) => {
		const f = includeEdgeZones && r.wholeTrial ? r.wholeTrial : r;
		return {
			dof: r.dof,
			quantity: r.quantity,
			unit: r.unit,
			peakPositive: f.peakPositive ?? null,
			peakPositiveTime: f.peakPositiveTime ?? null,
			peakNegative: f.peakNegative ?? null,
			peakNegativeTime: f.peakNegativeTime ?? null,
			range: f.range ?? null,
			mean: f.mean ?? null,
			samples: f.samples ?? null
		};
	});
}

/** What a summary's figures cover, in words. */
export function summaryScope(edgeZone: EdgeZoneView, includeEdgeZones: boolean): string {
	if (!edgeZone.computed) return 'every sample (the run was made before edge zones were introduced: its edge zone was not computed)';
	return includeEdgeZones
		? 'every sample, edge zones included'
		: 'the samples outside the edge zones (the first and last stretches where results are not reliable)';
}

/** GET …/runs/[rid]/summary[?includeEdgeZones=1]: peaks, range and mean per DOF, without the edge zones unless asked. */
export async function loadSummary(actor: Actor | null, ctx: RequestContext, input: RunQuery): Promise<SummaryAnswer> {
	const { run } = await guardedRun(actor, ctx, 'study.read', input);
	const include = includeEdgeZonesStrict(input.query);
	requireDone(run);
	const stored = await storedResultsOf(run.id);
	return {
		runId: run.id,
		convention: 'Internal joint moments: the moment the proximal segment exerts on the distal one; positive in the DOF’s positive sense.',
		bodyMassKg: stored.modelFields.bodyMassKg ?? null,
		edgeZone: stored.edgeZone,
		edgeZonesIncluded: include,
		scope: summaryScope(stored.edgeZone, include),
		summary: summaryRows(stored.summary, include)
	};
}

/** How the run and trial pages name a trial: its file, session, participant and sampling rate. */
const trialHeading = (t: TrialContext) => ({
	id: t.trialId,
	fileName: t.fileName,
	sessionId: t.sessionId,
	participantCode: t.participantCode,
	sampleHz: t.sampleHz
});

/** Everything the results page shows: the run, its trial, provenance, summary and the moment curves. */
export async function loadRunPage(actor: Actor | null, ctx: RequestContext, input: RunQuery) {
	const { actor: a, study, run, trial } = await guardedRun(actor, ctx, 'study.read', input);
	const stored = await storedResultsOf(run.id);
	const done = run.state === 'done';
	const include = includeEdgeZonesOf(input.query);
	return {
		study: { id: study.id, code: study.code, title: study.title },
		trial: trialHeading(trial),
		run,
		canStart: may(a, 'run.start', study.id),
		summary: done ? summaryRows(stored.summary, include) : [],
		includeEdgeZones: include,
		summaryScope: summaryScope(stored.edgeZone, include),
		edgeZone: done ? stored.edgeZone : null,
		model: done ? stored.model : null,
		moments: done ? await seriesOfRun(run.id, { quantity: 'moment', points: 600 }) : null
	};
}

/** The moment curves of the newest done run of each trial of a session (for the session page's first plot). */
export async function latestMomentsBySession(sessionId: string, points = 400): Promise<Record<string, SeriesAnswer>> {
	const out: Record<string, SeriesAnswer> = {};
	for (const r of await latestDoneRunPerTrial(sessionId)) out[r.trial_id] = await seriesOfRun(r.id, { quantity: 'moment', points });
	return out;
}

// ---------------------------------------------------------------------------------------------- residual analysis

/**
 * Residual analysis of every channel of a trial (computed on request from the raw bytes): the residual against
 * cutoff, the noise line and the suggested cutoff, so a person can choose the cutoff of a run.
 */
export async function trialResiduals(trial: TrialContext, fillGaps: boolean): Promise<TrialResiduals> {
	let rec: Recording;
	try {
		const built = buildSessionModel(await participantBody(trial.participantId), sessionSetupSchema.parse(trial.setup));
		rec = await readRecording(trial, built, fillGaps);
	} catch (err) {
		throw new DomainError('unprocessable', (err as Error).message);
	}
	// readRecording fails on any gap it does not fill (the recording checks), so every channel has a value at every sample
	const channels = rec.channels.map((c): ChannelResidual => {
		try {
			const r = residualAnalysis(c.values, rec.sampleHz);
			return { channel: c.name, ...r, problem: null };
		} catch (err) {
			return { channel: c.name, cutoffs: [], residuals: [], suggestedHz: null, noiseLine: null, problem: (err as Error).message };
		}
	});
	return { sampleHz: rec.sampleHz, channels };
}

/** A trial in the URL with the request's query parameters. */
type TrialQuery = { studyId: string; trialId: string; query: URLSearchParams };

/** The trial page: trial, its runs, and (when asked) residual analysis per channel. */
export async function loadTrialPage(actor: Actor | null, ctx: RequestContext, input: TrialQuery) {
	const { actor: a, study, trial } = await guardedTrial(actor, ctx, 'study.read', input);
	const runs = (await listRunsForSession(trial.sessionId)).filter((r) => r.trialId === trial.trialId);
	const wantResiduals = input.query.get('residuals') === '1';
	const fillGaps = input.query.get('fillGaps') === 'on';
	return {
		study: { id: study.id, code: study.code, title: study.title },
		trial: {
			...trialHeading(trial),
			channels: trial.channels,
			sessionState: trial.sessionState,
			force: trial.forceFileName ? { fileName: trial.forceFileName, plates: trial.forcePlates ?? [] } : null
		},
		runs,
		canStart: may(a, 'run.start', study.id),
		residuals: wantResiduals ? await trialResiduals(trial, fillGaps) : null,
		fillGaps
	};
}

/** GET /api/…/trials/[tid]/residuals */
export async function loadResiduals(
	actor: Actor | null,
	ctx: RequestContext,
	input: TrialQuery
): Promise<TrialResiduals & { trialId: string }> {
	const { trial } = await guardedTrial(actor, ctx, 'study.read', input);
	return { trialId: trial.trialId, ...(await trialResiduals(trial, input.query.get('fillGaps') === 'on')) };
}

/** The session page a trial belongs to (where forms about its runs send people back to). */
export async function sessionOfTrial(rawStudyId: string, rawTrialId: string): Promise<string | null> {
	if (!isUuid(rawTrialId) || !isUuid(rawStudyId)) return null;
	return sessionIdOfTrial(rawTrialId.toLowerCase(), rawStudyId.toLowerCase());
}
