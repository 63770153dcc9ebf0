// Processing a run (the worker's side): claiming it, the computation in a thread with progress, results stored all
// or nothing, the attempt's failure or retry, and runs whose job was abandoned. No SvelteKit: the worker calls these.
import { Worker } from 'node:worker_threads';
import { fn, Op, type Transaction } from 'sequelize';
import { db } from '../db/index';
import { ForcePlate as PlateRecord, Run, RunSeries } from '../db/models';
import { DomainError } from '../errors';
import { record } from '../audit/record';
import { requireValidConsent } from '../consent/check';
import { participantBodyOf } from '../sessions/sessions';
import { readRaw } from '../trials/raw-store';
import { pendingRunJob } from '../jobs/queue';
import { assertStorable, computeRun, type ComputedRun, type ForceInput } from './compute';
import { writeGait } from './gait-results';
import { claimRun, insertSeries, trialContextOfRun } from './queries';
import type { RunThreadInput, RunThreadMessage } from '../jobs/run-thread-types';
import { buildSessionModel, sessionSetupSchema, type SessionSetup } from '../../processing/session-model';
import { storedRunOptions } from '../../processing/pipeline';
import {
	parseRecording,
	columnMappingSchema,
	forceChannelsOf,
	pairForceRecording,
	plateChannelNames,
	type Recording,
	type Problem
} from '../../processing/recording';
import { DEFAULT_CONTACT_THRESHOLD_N, type ForcePlate } from '../../processing/forces';
import type { ParticipantBody } from '../../anthropometry/scale';

/** A failure that another attempt would repeat (consent, an unreadable file, an impossible model): no retry. */
export class RunFailure extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'RunFailure';
	}
}

/** Errors of the pipeline that the same input always repeats. */
const DETERMINISTIC = ['SessionModelError', 'ScalingError', 'SignalError', 'PipelineError', 'ZodError', 'ForceError', 'GaitError'];

/** A refusal of a check the run depends on (consent) fails the run with its message; anything else is rethrown. */
async function asRunFailure<T>(work: () => Promise<T>): Promise<T> {
	try {
		return await work();
	} catch (err) {
		if (err instanceof DomainError) throw new RunFailure(err.message);
		throw err;
	}
}

/** The participant's body for scaling (one rule with the session page: latest measured length per segment). */
export async function participantBody(participantId: string): Promise<ParticipantBody> {
	try {
		return await participantBodyOf(participantId);
	} catch (err) {
		throw new RunFailure((err as Error).message);
	}
}

function problemText(p: Problem[]): string {
	return p
		.filter((x) => x.severity === 'error')
		.slice(0, 5)
		.map((x) => `${x.file}${x.row ? ` row ${x.row}` : ''}${x.column ? `, column “${x.column}”` : ''}: ${x.message}`)
		.join(' ');
}

/** The force-file fields of a trial (migration 0011); all null without forces. */
interface TrialForceFields {
	forceRawUploadId?: string | null;
	forceFileName?: string | null;
	forceSha256?: string | null;
	forcePlates?: string[] | null;
	forceMapping?: unknown;
}

/** A trial whose force-plate columns are in its angle file (one upload, the same rate): its force upload is the angle file's. */
const forcesInAngleFile = (trial: { rawUploadId: string } & TrialForceFields) =>
	!!trial.forceRawUploadId && trial.forceRawUploadId === trial.rawUploadId;

/** The plates a trial's forces name, as set up in the lab now; RunFailure when one is no longer in use. */
async function platesOfTrial(trial: TrialForceFields): Promise<ForcePlate[]> {
	const names = trial.forcePlates ?? [];
	const rows = await PlateRecord.findAll({ where: { name: names, archivedAt: null } });
	const missing = names.filter((n) => !rows.some((r) => r.name === n));
	if (missing.length)
		throw new RunFailure(
			`The force file ${trial.forceFileName} names ${missing.length === 1 ? 'the plate' : 'the plates'} ${missing.join(', ')}, no longer set up in the lab (archived or renamed); set ${missing.length === 1 ? 'it' : 'them'} up again to run this trial.`
		);
	return names.map((n) => rows.find((r) => r.name === n)!.plate);
}

/** A trial's angle file as parsed for a run: its angle channels, and the plates' channels when the file carries them. */
export interface AngleFile {
	recording: Recording;
	/** The force-plate channels of an angle file that carries them (parsed with the angles), with their plates; else null. */
	plateColumns: { recording: Recording; plates: ForcePlate[] } | null;
}

/**
 * Reads and parses a trial's raw file for a model (gaps filled when asked); RunFailure with the problems otherwise.
 * An angle file with its own force-plate columns is parsed once with the plates' channels too, kept apart from the
 * angle channels (readForces takes them).
 */
export async function readAngleFile(
	trial: { rawUploadId: string; fileName: string; mapping: unknown; sha256: string } & TrialForceFields,
	built: ReturnType<typeof buildSessionModel>,
	fillGaps: boolean
): Promise<AngleFile> {
	const mapping = trial.mapping ? columnMappingSchema.parse(trial.mapping) : undefined;
	const plates = forcesInAngleFile(trial) ? await platesOfTrial(trial) : [];
	const parsed = await parseRecording(readRaw(trial.rawUploadId, { expectSha256: trial.sha256 }), {
		fileName: trial.fileName,
		expected: plates.length ? [...built.expected, ...forceChannelsOf(plates, { thresholdN: DEFAULT_CONTACT_THRESHOLD_N })] : built.expected,
		mapping,
		fillGaps
	});
	if (!parsed.ok) throw new RunFailure(`The recording could not be read: ${problemText(parsed.problems)}`);
	if (!plates.length) return { recording: parsed.recording, plateColumns: null };
	const rec = parsed.recording;
	const names = new Set(plates.flatMap((p) => plateChannelNames(p)));
	return {
		recording: { ...rec, channels: rec.channels.filter((c) => !names.has(c.name)) },
		plateColumns: { recording: { ...rec, channels: rec.channels.filter((c) => names.has(c.name)) }, plates }
	};
}

/** The angle recording of a trial's raw file (readAngleFile without the plates' channels). */
export async function readRecording(
	trial: { rawUploadId: string; fileName: string; mapping: unknown; sha256: string } & TrialForceFields,
	built: ReturnType<typeof buildSessionModel>,
	fillGaps: boolean
): Promise<Recording> {
	return (await readAngleFile(trial, built, fillGaps)).recording;
}

/**
 * Reads a trial's force file for a run: the plates it names as set up in the lab now (refused when one is no longer
 * in use), parsed again from the stored bytes and paired with the angle recording. Null for a trial without one.
 * Forces in the angle file itself come from readAngleFile's parse (the same samples: ratio 1).
 */
export async function readForces(
	trial: {
		forceRawUploadId: string | null;
		forceFileName: string | null;
		forceSha256: string | null;
		forcePlates: string[] | null;
		forceMapping: unknown;
		fileName: string;
		rawUploadId?: string;
	},
	angleFile: AngleFile
): Promise<ForceInput | null> {
	if (!trial.forceRawUploadId || !trial.forceFileName || !trial.forceSha256) return null;
	const angles = angleFile.recording;
	if (trial.rawUploadId && forcesInAngleFile({ ...trial, rawUploadId: trial.rawUploadId })) {
		const own = angleFile.plateColumns;
		if (!own) throw new Error(`the force-plate columns of ${trial.fileName} were not read with its angles`);
		return { fileName: trial.forceFileName, forceHz: angles.sampleHz, ratio: 1, plates: own.plates, recording: own.recording };
	}
	const plates = await platesOfTrial(trial);
	const mapping = trial.forceMapping ? columnMappingSchema.parse(trial.forceMapping) : undefined;
	const parsed = await parseRecording(readRaw(trial.forceRawUploadId, { expectSha256: trial.forceSha256 }), {
		fileName: trial.forceFileName,
		expected: forceChannelsOf(plates, { thresholdN: DEFAULT_CONTACT_THRESHOLD_N }),
		mapping
	});
	if (!parsed.ok) throw new RunFailure(`The force recording could not be read: ${problemText(parsed.problems)}`);
	const paired = pairForceRecording(angles, parsed.recording, { angle: trial.fileName, force: trial.forceFileName });
	if (!paired.ok) throw new RunFailure(`The force recording cannot be used: ${problemText(paired.problems)}`);
	const { pairing } = paired;
	return { fileName: trial.forceFileName, forceHz: pairing.forceHz, ratio: pairing.ratio, plates, recording: pairing.force };
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
				reject(DETERMINISTIC.includes(m.name) ? new RunFailure(m.message) : new Error(m.message));
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
		return computeRun(input.body, input.setup, input.recording, input.options, onProgress, input.force);
	} catch (err) {
		if (DETERMINISTIC.includes((err as Error).name)) throw new RunFailure((err as Error).message);
		throw err;
	}
}

/** Where the attempt still owns the run (no later attempt claimed it) and it is not done. */
const ownedBy = (runId: string, attempt: number) => ({ id: runId, attempts: attempt, state: { [Op.ne]: 'done' } });

/** Progress writes at most every 250 ms, one at a time, and only for the attempt that still owns the run. */
function progressWriter(runId: string, attempt: number) {
	let last = 0;
	let pending: { fraction: number; stage: string } | null = null;
	let writing: Promise<void> | null = null;
	const flush = async () => {
		while (pending) {
			const p = pending;
			pending = null;
			await Run.update(
				{ progress: Math.min(0.99, Math.max(0, p.fraction)), stage: p.stage.slice(0, 200) },
				{ where: { id: runId, attempts: attempt, state: 'running' } }
			);
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

const issuesText = (issues: { path: PropertyKey[]; message: string }[]) =>
	issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ');

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
	const trial = await trialContextOfRun(runId);
	if (!trial) return { state: 'skipped', attempt: 0 };
	const claimed = await claimRun(runId);
	if (!claimed) return { state: 'skipped', attempt: 0 };
	const attempt = claimed.attempts;
	const progress = progressWriter(runId, attempt);
	try {
		await asRunFailure(() => requireValidConsent(trial.participantId, 'run'));
		const parsedOptions = storedRunOptions(claimed.options);
		if (!parsedOptions.success) throw new RunFailure(`The run's options are not valid: ${issuesText(parsedOptions.error.issues)}`);
		const options = parsedOptions.data;
		const setupParsed = sessionSetupSchema.safeParse(trial.setup);
		if (!setupParsed.success) throw new RunFailure(`The session's model set-up is not valid: ${issuesText(setupParsed.error.issues)}`);
		const setup: SessionSetup = setupParsed.data;
		const body = await participantBody(trial.participantId);
		let built: ReturnType<typeof buildSessionModel>;
		try {
			built = buildSessionModel(body, setup);
		} catch (err) {
			throw new RunFailure(`The model could not be built: ${(err as Error).message}`);
		}
		progress.update(0.01, 'reading the recording');
		const angleFile = await readAngleFile(trial, built, options.fillGaps);
		if (trial.forceRawUploadId) progress.update(0.015, 'reading the force recording');
		const force = await readForces(trial, angleFile);
		const input: RunThreadInput = { body, setup, recording: angleFile.recording, options, force };
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
		const msg = (err as Error).message || String(err);
		const final = err instanceof RunFailure || job.retryCount >= job.retryLimit;
		if (final) {
			await Run.update(
				{ state: 'failed', error: msg.slice(0, 4000), finishedAt: fn('now'), stage: null },
				{ where: ownedBy(runId, attempt) }
			);
			return { state: 'failed', attempt, error: msg };
		}
		await Run.update(
			{
				state: 'queued',
				progress: 0,
				stage: null,
				error: `Attempt ${attempt} failed (${msg.slice(0, 2000)}); it will be tried again automatically.`
			},
			{ where: ownedBy(runId, attempt) }
		);
		throw err;
	}
}

/**
 * Writes a run's results all or nothing: locks the run, checks consent again (a withdrawal during processing
 * wins), deletes any earlier rows of the run, inserts every series, and marks it done.
 */
export async function storeResults(
	runId: string,
	attempt: number,
	participantId: string,
	computed: ComputedRun
): Promise<{ ok: true } | { ok: false; reason: string }> {
	return db().transaction(async (transaction) => {
		const row = await Run.findByPk(runId, { attributes: ['state', 'attempts'], lock: transaction.LOCK.UPDATE, transaction });
		if (!row || row.state !== 'running' || row.attempts !== attempt) return { ok: false as const, reason: 'another attempt owns this run' };
		await asRunFailure(() => requireValidConsent(participantId, 'run', transaction));
		await writeResults(runId, computed, transaction);
		await record(
			{
				action: 'run.finished',
				actorLabel: 'worker',
				recordType: 'run',
				recordId: runId,
				details: { attempt, series: computed.series.length, timings: computed.timings }
			},
			transaction
		);
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
	await RunSeries.destroy({ where: { runId }, transaction });
	await insertSeries(runId, computed.series, transaction);
	await writeGait(runId, computed.gait ?? null, transaction);
	await Run.update(
		{
			state: 'done',
			progress: 1,
			stage: null,
			error: null,
			finishedAt: fn('now'),
			summary: computed.summary,
			model: computed.model,
			edgeZone: { ...computed.edgeZone }
		},
		{ where: { id: runId }, transaction }
	);
}

/** The message of a run whose every attempt stopped before it finished. */
const ABANDONED = 'Processing stopped before it finished (the worker was stopped or lost) on every attempt. Retry the run.';

/**
 * A job that ran out of attempts without its handler finishing (the worker vanished on the last attempt):
 * the run is marked failed so that a person can retry it, unless a newer job for it is still pending.
 */
export async function abandonRun(runId: string): Promise<void> {
	const run = await Run.findByPk(runId, { attributes: ['id', 'state', 'jobId'] });
	if (!run || (run.state !== 'queued' && run.state !== 'running')) return;
	if (await pendingRunJob(run.jobId ?? run.id)) return;
	await Run.update(
		{ state: 'failed', finishedAt: fn('now'), stage: null, error: ABANDONED },
		{ where: { id: runId, state: ['queued', 'running'] } }
	);
}
