// Reviewing results: the plot data of a session's runs (full resolution for the read-out, reduced for drawing), the
// cycle events of a run (read, saved under the session lock, audited) and comparisons across sessions or
// participants of a study (codes only; done runs only, never excluded ones). Services take (actor, ctx, input) and
// throw domain errors; no SvelteKit here.
import type { Transaction } from 'sequelize';
import { z } from 'zod';
import { db } from '../db/index';
import { CycleEvent, Session } from '../db/models';
import { DomainError, FormProblem, conflict } from '../errors';
import { assertSessionUnlocked } from '../sessions/lock';
import { isUuid, may, studyFor, type Actor } from '../access/guard';
import type { RequestContext } from '../access/context';
import { includeEdgeZonesOf, recordRunAction, runIn, storedSeries, timeOfRun } from '../runs/runs';
import { sessionIn } from '../sessions/sessions';
import { doneRunsOfParticipant, doneRunsOfSession, participantsWithDoneRuns, type DoneRunRow } from './queries';
import { reduceForPlot } from '../../processing/reduce';
import { cyclePeaks, eventProblems, meanSd, meanSdOf, normaliseCycles } from '../../processing/cycles';
import { reliableSpan, repetitionsInEdgeZone } from '../../processing/zone-exclusion';
import {
	COMPARE_QUANTITIES,
	type CompareGroup,
	type CompareQuantity,
	type EventSet,
	type ReviewAnswer,
	type ReviewCurve,
	type ReviewRun
} from '../../types/review';
import type { ResultQuantity } from '../../types/runs';

export { COMPARE_QUANTITIES, type CompareGroup, type CompareQuantity, type EventSet, type ReviewAnswer, type ReviewCurve, type ReviewRun };

// ---------------------------------------------------------------------------------------------- compact numbers

/** 6 significant digits: far below the accuracy of any joint moment, and a third of the JSON. */
export const round6 = (x: number): number | null => (Number.isFinite(x) ? Number(x.toPrecision(6)) : null);
/** Times to the microsecond (6 significant digits would lose samples late in a long recording). */
const roundTime = (x: number): number => Math.round(x * 1e6) / 1e6;

// ---------------------------------------------------------------------------------------------- runs of a session

/** Index of time value x in the strictly increasing array (x is one of its elements). */
function indexOf(time: ArrayLike<number>, x: number): number {
	let lo = 0;
	let hi = time.length - 1;
	while (lo < hi) {
		const mid = (lo + hi) >> 1;
		if (time[mid] < x) lo = mid + 1;
		else hi = mid;
	}
	return lo;
}

/** One done run's curves of a quantity: full samples plus the indices to draw. */
export async function reviewRun(row: DoneRunRow, quantity: ResultQuantity, maxPoints: number): Promise<ReviewRun> {
	const s = await storedSeries(row.id, { quantity });
	const time = s.time;
	const curves: ReviewCurve[] = s.curves
		.filter((c) => !c.component)
		.map((c) => {
			const red = reduceForPlot(time, c.values, maxPoints);
			return {
				name: c.name,
				unit: c.unit,
				positive: c.positive,
				v: Array.from(c.values, round6),
				drawn: red.t.map((x) => indexOf(time, x))
			};
		});
	return {
		runId: row.id,
		trialId: row.trial_id,
		fileName: row.file_name,
		runNumber: Number(row.number),
		latest: row.latest,
		participantCode: row.participant_code,
		sessionOn: row.session_on,
		bodyMassKg: s.bodyMassKg,
		samples: time.length,
		t: Array.from(time, roundTime),
		curves,
		events: await eventSetOfRun(row.id),
		edgeZone: s.edgeZone
	};
}

const reviewQuery = z.object({
	quantity: z
		.enum(['moment', 'moment_per_kg', 'angle', 'power'], { error: 'quantity must be one of moment, moment_per_kg, angle, power' })
		.default('moment'),
	points: z.coerce.number().int().min(10, 'points must be at least 10').max(20_000, 'points must be at most 20000').default(2000)
});

/** GET …/sessions/[sid]/review: the session's done runs (not excluded) with their curves for the review plots. */
export async function loadSessionReview(
	actor: Actor | null,
	ctx: RequestContext,
	input: { studyId: string; sessionId: string; query: URLSearchParams }
): Promise<ReviewAnswer> {
	const { study } = await studyFor(actor, ctx, 'study.read', input.studyId);
	const session = await sessionIn(study.id, input.sessionId);
	const sp = input.query;
	const q = reviewQuery.safeParse({ quantity: sp.get('quantity') ?? undefined, points: sp.get('points') ?? undefined });
	if (!q.success) throw new DomainError('invalid', q.error.issues.map((i) => i.message).join('; '));
	const runs: ReviewRun[] = [];
	for (const r of await doneRunsOfSession(session.id)) runs.push(await reviewRun(r, q.data.quantity, q.data.points));
	return {
		quantity: q.data.quantity,
		convention:
			'Internal joint moments (the moment the proximal segment exerts on the distal one); every quantity positive in its DOF’s positive sense.',
		maxPoints: q.data.points,
		runs
	};
}

// ---------------------------------------------------------------------------------------------- cycle events

const eventSetOf = (e: CycleEvent): EventSet => ({ times: e.times, source: e.source, rule: e.rule, updatedAt: e.updatedAt.toISOString() });

/** The run's cycle events, or null when none are set. */
async function eventSetOfRun(runId: string, transaction?: Transaction): Promise<EventSet | null> {
	const row = await CycleEvent.findOne({ where: { runId }, transaction });
	return row && eventSetOf(row);
}

/** The run's current event times (s), or null when none are set. */
export async function eventsOfRun(runId: string): Promise<number[] | null> {
	return (await eventSetOfRun(runId))?.times ?? null;
}

type RunRef = { studyId: string; runId: string };

/** GET …/runs/[rid]/events */
export async function readRunEvents(
	actor: Actor | null,
	ctx: RequestContext,
	input: RunRef
): Promise<{ runId: string; events: EventSet | null }> {
	const { study } = await studyFor(actor, ctx, 'study.read', input.studyId);
	const { run } = await runIn(study.id, input.runId);
	return { runId: run.id, events: await eventSetOfRun(run.id) };
}

const eventsSchema = z.object({
	times: z
		.array(z.number({ error: 'Every event time must be a number of seconds.' }), { error: 'Give the event times as a list of seconds.' })
		.max(2000, 'At most 2000 events per run.'),
	source: z.enum(['manual', 'peaks', 'threshold'], { error: 'source must be manual, peaks or threshold.' }).default('manual'),
	rule: z.record(z.string(), z.unknown()).nullable().optional()
});

/** Times typed into a form: numbers separated by commas, semicolons, spaces or new lines (decimal point). */
export function parseTimesText(text: string): number[] {
	return text
		.split(/[\s,;]+/)
		.filter(Boolean)
		.map((x) => (/^[+-]?(\d+\.?\d*|\.\d+)$/.test(x) ? Number(x) : Number.NaN));
}

/** The events a request sends: a JSON body, or a form with `times` (text), `source` and `rule` (JSON). */
async function eventsBodyOf(request: Request): Promise<unknown> {
	const type = request.headers.get('content-type') ?? '';
	if (type.includes('application/json')) {
		try {
			return await request.json();
		} catch {
			throw new FormProblem({ form: 'The request body is not valid JSON.' });
		}
	}
	try {
		const form = await request.formData();
		const rule = form.get('rule');
		return {
			times: parseTimesText(String(form.get('times') ?? '')),
			source: form.get('source') || undefined,
			rule: rule ? JSON.parse(String(rule)) : undefined
		};
	} catch {
		throw new FormProblem({ rule: 'The rule is not valid JSON.' });
	}
}

/**
 * POST …/runs/[rid]/events: replaces the run's events. Researchers, PIs and technicians (those who may start runs);
 * refused on an approved session (conflict), validated (FormProblem with messages per field), audited in the same transaction.
 */
export async function saveRunEvents(actor: Actor | null, ctx: RequestContext, input: RunRef & { request: Request }): Promise<EventSet> {
	const { actor: a, study } = await studyFor(actor, ctx, 'run.start', input.studyId);
	const { run, trial } = await runIn(study.id, input.runId);
	// the lock first, so an approved session answers with the lock's message whatever was sent (checked again below)
	await assertSessionUnlocked(trial.sessionId);
	const parsed = eventsSchema.safeParse(await eventsBodyOf(input.request));
	if (!parsed.success) {
		const errors: Record<string, string> = {};
		for (const i of parsed.error.issues) errors[String(i.path[0] ?? 'form')] ??= i.message;
		throw new FormProblem(errors);
	}
	if (run.state !== 'done') throw conflict('Events can be marked only on a run with results (this run is not done).');
	const time = (await timeOfRun(run.id)) ?? [];
	if (time.length < 2) throw conflict('This run has no time axis to mark events on.');
	const first = roundTime(time[0]);
	const last = roundTime(time[time.length - 1]);
	const problem = eventProblems(parsed.data.times, first, last);
	if (problem) throw new FormProblem({ times: problem });
	const { times, source } = parsed.data;
	const rule = parsed.data.rule ?? null;
	return db().transaction(async (t) => {
		await assertSessionUnlocked(trial.sessionId, t);
		const before = await eventSetOfRun(run.id, t);
		// one set per run: a save replaces the run's row (unique run id, the conflict target) but keeps its id and creation time
		const [saved] = await CycleEvent.upsert(
			{ runId: run.id, times, source, rule, createdBy: a.id, updatedAt: new Date() },
			{ fields: ['runId', 'times', 'source', 'rule', 'createdBy', 'updatedAt'], returning: true, transaction: t }
		);
		await recordRunAction(
			a,
			ctx,
			{ action: 'run.events.save', studyId: study.id, runId: run.id, details: { source, rule, times, previous: before?.times ?? null } },
			t
		);
		return eventSetOf(saved);
	});
}

// ---------------------------------------------------------------------------------------------- comparisons

/** Per DOF: its unit, sign rule and time-normalised cycles. */
type Pooled = Map<string, { unit: string; positive: string | null; cycles: number[][] }>;

/**
 * Normalised cycles (events) or the whole trial of one run, per DOF. Unless edge zones are included, a repetition
 * that overlaps the run's edge zone is left out, and a whole trial is normalised from its first to its last sample
 * outside the zone (nothing when the zone covers the trial).
 */
async function runCycles(
	runId: string,
	quantity: CompareQuantity,
	includeEdgeZones: boolean
): Promise<{ basis: 'events' | 'whole'; count: number; leftOut: number; trimmed: boolean; byDof: Pooled }> {
	const s = await storedSeries(runId, { quantity });
	const events = await eventsOfRun(runId);
	const byEvents = Boolean(events && events.length >= 2);
	const zone = includeEdgeZones ? { startSamples: 0, endSamples: 0 } : s.edgeZone;
	const span = reliableSpan(s.time, zone);
	let cuts: number[] = [];
	let keep: boolean[] = [];
	let trimmed = false;
	if (byEvents) {
		cuts = events!;
		keep = repetitionsInEdgeZone(s.time, cuts, zone).map((inZone) => !inZone);
	} else if (span && span.to > span.from) {
		cuts = [span.from, span.to];
		keep = [true];
		trimmed = zone.startSamples > 0 || zone.endSamples > 0;
	} else {
		keep = [false];
	}
	const byDof: Pooled = new Map();
	for (const c of s.curves) {
		const { cycles } = cuts.length >= 2 ? normaliseCycles(s.time, c.values, cuts) : { cycles: [] as number[][] };
		byDof.set(c.name, { unit: c.unit, positive: c.positive, cycles: cycles.filter((_, k) => keep[k]) });
	}
	const count = keep.filter(Boolean).length;
	return { basis: byEvents ? 'events' : 'whole', count, leftOut: keep.length - count, trimmed, byDof };
}

/** Pools per-DOF cycles into mean ± SD with the per-cycle peaks summarised. */
function summarise(label: string, pooled: Pooled, counts: Counts): CompareGroup {
	const percent = Array.from({ length: 101 }, (_, j) => j);
	return {
		label,
		...counts,
		dofs: [...pooled.entries()].map(([name, d]) => {
			const ms = meanSd(d.cycles);
			const peaks = d.cycles.map((c) => cyclePeaks(percent, c));
			const pmax = meanSdOf(peaks.map((p) => p.max));
			const pmin = meanSdOf(peaks.map((p) => p.min));
			return {
				name,
				unit: d.unit,
				positive: d.positive,
				mean: ms.mean.map(round6),
				sd: ms.sd.map(round6),
				n: d.cycles.length,
				peakMax: { mean: round6(pmax.mean), sd: round6(pmax.sd) },
				peakMin: { mean: round6(pmin.mean), sd: round6(pmin.sd) }
			};
		})
	};
}

function pool(into: Pooled, from: Pooled): void {
	for (const [name, d] of from) {
		const g = into.get(name) ?? { unit: d.unit, positive: d.positive, cycles: [] };
		g.cycles.push(...d.cycles);
		into.set(name, g);
	}
}

type Counts = { runs: number; cycles: number; byEvents: number; wholeTrials: number; leftOut: number; trimmed: number };
const noCounts = (): Counts => ({ runs: 0, cycles: 0, byEvents: 0, wholeTrials: 0, leftOut: 0, trimmed: 0 });

/** The cycles of these runs pooled per DOF; `counts` adds up the runs, cycles and how each run was normalised. */
async function collect(rows: DoneRunRow[], quantity: CompareQuantity, counts: Counts, includeEdgeZones: boolean): Promise<Pooled> {
	const pooled: Pooled = new Map();
	for (const r of rows) {
		const rc = await runCycles(r.id, quantity, includeEdgeZones);
		pool(pooled, rc.byDof);
		counts.runs++;
		counts.cycles += rc.count;
		counts.leftOut += rc.leftOut;
		if (rc.trimmed) counts.trimmed++;
		if (rc.basis === 'events') counts.byEvents++;
		else counts.wholeTrials++;
	}
	return pooled;
}

const ids = (sp: URLSearchParams, key: string) =>
	sp
		.getAll(key)
		.filter(isUuid)
		.map((x) => x.toLowerCase());

/** The compare page: pick lists (codes and dates only) and the chosen comparison. */
export async function loadCompare(actor: Actor | null, ctx: RequestContext, input: { studyId: string; query: URLSearchParams }) {
	const { actor: a, study } = await studyFor(actor, ctx, 'study.read', input.studyId);
	const sp = input.query;
	const mode = sp.get('mode') === 'group' ? 'group' : 'sessions';
	const quantity = (COMPARE_QUANTITIES as readonly string[]).includes(sp.get('quantity') ?? '')
		? (sp.get('quantity') as CompareQuantity)
		: 'moment';
	const participants = await participantsWithDoneRuns(study.id);
	const participantId = ids(sp, 'participant')[0] ?? null;
	const chosenP = participants.find((p) => p.id === participantId) ?? null;
	const sessions = chosenP
		? (
				await Session.findAll({
					where: { participantId: chosenP.id, studyId: study.id },
					attributes: ['id', 'sessionOn', 'task'],
					order: [
						['sessionOn', 'ASC'],
						['createdAt', 'ASC']
					]
				})
			).map((s) => ({
				id: s.id,
				sessionOn: String(s.sessionOn),
				task: s.task
			}))
		: [];
	const groups: CompareGroup[] = [];
	const allRuns = sp.get('runs') === 'all';
	const includeEdgeZones = includeEdgeZonesOf(sp);
	if (mode === 'sessions' && chosenP) {
		for (const sid of ids(sp, 'session').filter((x) => sessions.some((s) => s.id === x))) {
			const s = sessions.find((x) => x.id === sid)!;
			const rows = (await doneRunsOfSession(sid)).filter((r) => allRuns || r.latest);
			const counts = noCounts();
			const pooled = await collect(rows, quantity, counts, includeEdgeZones);
			groups.push(summarise(`${chosenP.code}, session ${s.sessionOn}`, pooled, counts));
		}
	}
	if (mode === 'group') {
		const chosen = ids(sp, 'p').filter((x) => participants.some((p) => p.id === x));
		// each participant contributes one curve (the mean of their cycles), so many repetitions do not outweigh others
		const perParticipant: Pooled = new Map();
		const counts = noCounts();
		for (const pid of chosen) {
			const rows = (await doneRunsOfParticipant(pid, study.id)).filter((r) => allRuns || r.latest);
			const own = await collect(rows, quantity, counts, includeEdgeZones);
			const means: Pooled = new Map();
			// a participant all of whose repetitions were left out contributes no curve
			for (const [name, d] of own) if (d.cycles.length) means.set(name, { ...d, cycles: [meanSd(d.cycles).mean] });
			pool(perParticipant, means);
		}
		if (chosen.length)
			groups.push(summarise(`Group of ${chosen.length} participant${chosen.length === 1 ? '' : 's'}`, perParticipant, counts));
	}
	return {
		study: { id: study.id, code: study.code, title: study.title },
		mode,
		quantity,
		quantities: COMPARE_QUANTITIES,
		allRuns,
		includeEdgeZones,
		participants: participants.map((p) => ({ id: p.id, code: p.code, doneRuns: Number(p.done) })),
		participant: chosenP ? { id: chosenP.id, code: chosenP.code } : null,
		sessions,
		chosenSessions: ids(sp, 'session'),
		chosenParticipants: ids(sp, 'p'),
		groups,
		canMarkEvents: may(a, 'run.start', study.id)
	};
}
