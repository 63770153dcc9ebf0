// Reviewing results: the plot data of a session's runs (full resolution for the read-out, reduced for drawing), the
// cycle events of a run (read, saved under the session lock, audited) and comparisons across sessions or
// participants of a study (codes only; done runs only, never excluded ones).
import { contextOf } from '../http/edge';
import type { RequestEvent } from '@sveltejs/kit';
import { error } from '@sveltejs/kit';
import { QueryTypes } from 'sequelize';
import { z } from 'zod';
import { db } from '../db/index';
import { record } from '../audit/record';
import { assertSessionUnlocked } from '../sessions/lock';
import { isUuid } from '../studies/studies';
import { guardStudy } from '../studies/records';
import { may } from '../access/guard';
import { includeEdgeZonesOf, runIn, SERIES_QUANTITIES, storedSeries, timeOfRun, type ResultQuantity } from '../runs/runs';
import { sessionIn } from '../sessions/sessions';
import { reduceForPlot } from '../../processing/reduce';
import { cyclePeaks, eventProblems, meanSd, meanSdOf, normaliseCycles } from '../../processing/cycles';
import { reliableSpan, repetitionsInEdgeZone, type EdgeZoneView } from '../../processing/zone-exclusion';

// ---------------------------------------------------------------------------------------------- compact numbers

/** 6 significant digits: far below the accuracy of any joint moment, and a third of the JSON. */
export const round6 = (x: number): number | null => (Number.isFinite(x) ? Number(x.toPrecision(6)) : null);
/** Times to the microsecond (6 significant digits would lose samples late in a long recording). */
const roundTime = (x: number): number => Math.round(x * 1e6) / 1e6;

// ---------------------------------------------------------------------------------------------- runs of a session

interface DoneRunRow {
	id: string;
	trial_id: string;
	file_name: string;
	session_id: string;
	session_on: string;
	participant_id: string;
	participant_code: string;
	number: string | number;
	latest: boolean;
	flag_decision: string | null;
}

/** Done runs that may be reviewed or compared (never those excluded after a consent withdrawal), oldest first. */
async function doneRuns(where: string, replacements: Record<string, unknown>): Promise<DoneRunRow[]> {
	return db().query<DoneRunRow>(
		`SELECT r.id, r.trial_id, t.file_name, s.id AS session_id, s.session_on::text AS session_on, p.id AS participant_id, p.code AS participant_code, r.flag_decision,
		        (SELECT count(*) FROM runs o WHERE o.trial_id = r.trial_id AND (o.created_at, o.id) <= (r.created_at, r.id)) AS number,
		        NOT EXISTS (SELECT 1 FROM runs n WHERE n.trial_id = r.trial_id AND n.state = 'done' AND (n.flag_decision IS DISTINCT FROM 'exclude')
		                    AND (n.created_at, n.id) > (r.created_at, r.id)) AS latest
		   FROM runs r JOIN trials t ON t.id = r.trial_id JOIN sessions s ON s.id = t.session_id JOIN participants p ON p.id = s.participant_id
		  WHERE r.state = 'done' AND r.flag_decision IS DISTINCT FROM 'exclude' AND ${where}
		  ORDER BY s.session_on, t.created_at, r.created_at, r.id`,
		{ replacements, type: QueryTypes.SELECT }
	);
}

export interface ReviewCurve {
	name: string;
	unit: string;
	positive: string | null;
	/** Every sample (6 significant digits; null = gap), for the read-out and the CSV. */
	v: (number | null)[];
	/** Indices into t / v of the points drawn: LTTB plus every bucket's min and max (src/lib/processing/reduce.ts). */
	drawn: number[];
}

export interface ReviewRun {
	runId: string;
	trialId: string;
	fileName: string;
	runNumber: number;
	/** The newest done run of its trial (shown by default). */
	latest: boolean;
	participantCode: string;
	sessionOn: string;
	bodyMassKg: number | null;
	samples: number;
	/** Time of every sample (s, to the microsecond). */
	t: number[];
	curves: ReviewCurve[];
	events: EventSet | null;
	/** Where the run's results are not reliable near its ends (computed: false, all zero, for runs made before edge zones). */
	edgeZone: EdgeZoneView;
}

export interface ReviewAnswer {
	quantity: ResultQuantity;
	convention: string;
	maxPoints: number;
	runs: ReviewRun[];
}

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
			return { name: c.name, unit: c.unit, positive: c.positive, v: Array.from(c.values, round6), drawn: red.t.map((x) => indexOf(time, x)) };
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
	quantity: z.enum(['moment', 'moment_per_kg', 'angle', 'power'], { error: 'quantity must be one of moment, moment_per_kg, angle, power' }).default('moment'),
	points: z.coerce.number().int().min(10, 'points must be at least 10').max(20_000, 'points must be at most 20000').default(2000)
});

/** GET …/sessions/[sid]/review: the session's done runs (not excluded) with their curves for the review plots. */
export async function loadSessionReview(event: RequestEvent, rawStudyId: string, rawSid: string): Promise<ReviewAnswer> {
	const { study } = await guardStudy(event, 'study.read', rawStudyId);
	const session = await sessionIn(study.id, rawSid);
	const sp = event.url.searchParams;
	const q = reviewQuery.safeParse({ quantity: sp.get('quantity') ?? undefined, points: sp.get('points') ?? undefined });
	if (!q.success) error(400, q.error.issues.map((i) => i.message).join('; '));
	const rows = await doneRuns('s.id = :sid', { sid: session.id });
	const runs: ReviewRun[] = [];
	for (const r of rows) runs.push(await reviewRun(r, q.data.quantity, q.data.points));
	return {
		quantity: q.data.quantity,
		convention: 'Internal joint moments (the moment the proximal segment exerts on the distal one); every quantity positive in its DOF’s positive sense.',
		maxPoints: q.data.points,
		runs
	};
}

// ---------------------------------------------------------------------------------------------- cycle events

export interface EventSet {
	times: number[];
	source: 'manual' | 'peaks' | 'threshold';
	rule: Record<string, unknown> | null;
	updatedAt: string;
}

async function eventSetOfRun(runId: string): Promise<EventSet | null> {
	const rows = await db().query<{ times: number[]; source: EventSet['source']; rule: Record<string, unknown> | null; updated_at: Date }>(
		`SELECT times, source, rule, updated_at FROM cycle_events WHERE run_id = :runId`,
		{ replacements: { runId }, type: QueryTypes.SELECT }
	);
	const r = rows[0];
	return r ? { times: r.times.map(Number), source: r.source, rule: r.rule, updatedAt: new Date(r.updated_at).toISOString() } : null;
}

/** The run's current event times (s), or null when none are set. */
export async function eventsOfRun(runId: string): Promise<number[] | null> {
	return (await eventSetOfRun(runId))?.times ?? null;
}

/** GET …/runs/[rid]/events */
export async function readRunEvents(event: RequestEvent, rawStudyId: string, rawRid: string): Promise<{ runId: string; events: EventSet | null }> {
	const { study } = await guardStudy(event, 'study.read', rawStudyId);
	const { run } = await runIn(study.id, rawRid);
	return { runId: run.id, events: await eventSetOfRun(run.id) };
}

const eventsSchema = z.object({
	times: z.array(z.number({ error: 'Every event time must be a number of seconds.' }), { error: 'Give the event times as a list of seconds.' }).max(2000, 'At most 2000 events per run.'),
	source: z.enum(['manual', 'peaks', 'threshold'], { error: 'source must be manual, peaks or threshold.' }).default('manual'),
	rule: z.record(z.string(), z.unknown()).nullable().optional()
});

export class EventsProblem extends Error {
	constructor(public readonly errors: Record<string, string>) {
		super(Object.values(errors).join('; '));
	}
}

/** Times typed into a form: numbers separated by commas, semicolons, spaces or new lines (decimal point). */
export function parseTimesText(text: string): number[] {
	return text
		.split(/[\s,;]+/)
		.filter(Boolean)
		.map((x) => (/^[+-]?(\d+\.?\d*|\.\d+)$/.test(x) ? Number(x) : Number.NaN));
}

async function bodyOf(event: RequestEvent): Promise<unknown> {
	const type = event.request.headers.get('content-type') ?? '';
	if (type.includes('application/json')) {
		try {
			return await event.request.json();
		} catch {
			throw new EventsProblem({ form: 'The request body is not valid JSON.' });
		}
	}
	const form = await event.request.formData();
	const rule = form.get('rule');
	return { times: parseTimesText(String(form.get('times') ?? '')), source: form.get('source') || undefined, rule: rule ? JSON.parse(String(rule)) : undefined };
}

/**
 * POST …/runs/[rid]/events: replaces the run's events. Researchers, PIs and technicians (those who may start runs);
 * refused on an approved session (409), validated (400 with messages per field), audited in the same transaction.
 */
export async function saveRunEvents(event: RequestEvent, rawStudyId: string, rawRid: string): Promise<EventSet> {
	const { actor, study } = await guardStudy(event, 'run.start', rawStudyId);
	const { run, trial } = await runIn(study.id, rawRid);
	// the lock first, so an approved session answers with the lock's message whatever was sent (checked again below)
	await assertSessionUnlocked(trial.sessionId);
	let raw: unknown;
	try {
		raw = await bodyOf(event);
	} catch (err) {
		if (err instanceof EventsProblem) throw err;
		throw new EventsProblem({ rule: 'The rule is not valid JSON.' });
	}
	const parsed = eventsSchema.safeParse(raw);
	if (!parsed.success) {
		const errors: Record<string, string> = {};
		for (const i of parsed.error.issues) errors[String(i.path[0] ?? 'form')] ??= i.message;
		throw new EventsProblem(errors);
	}
	if (run.state !== 'done') error(409, 'Events can be marked only on a run with results (this run is not done).');
	const time = (await timeOfRun(run.id)) ?? [];
	if (time.length < 2) error(409, 'This run has no time axis to mark events on.');
	const first = roundTime(time[0]);
	const last = roundTime(time[time.length - 1]);
	const problem = eventProblems(parsed.data.times, first, last);
	if (problem) throw new EventsProblem({ times: problem });
	const { times, source } = parsed.data;
	const rule = parsed.data.rule ?? null;
	return db().transaction(async (t) => {
		await assertSessionUnlocked(trial.sessionId, t);
		const before = await eventSetOfRun(run.id);
		const [saved] = (await db().query(
			`INSERT INTO cycle_events (run_id, times, source, rule, created_by) VALUES (:runId, ARRAY[:times]::double precision[], :source, CAST(:rule AS jsonb), :actor)
			 ON CONFLICT (run_id) DO UPDATE SET times = EXCLUDED.times, source = EXCLUDED.source, rule = EXCLUDED.rule, created_by = EXCLUDED.created_by, updated_at = now()
			 RETURNING updated_at`,
			{ replacements: { runId: run.id, times, source, rule: rule === null ? null : JSON.stringify(rule), actor: actor.id }, transaction: t }
		)) as [{ updated_at: Date }[], unknown];
		await record(
			{
				action: 'run.events.save',
				actorUserId: actor.id,
				actorLabel: actor.email,
				studyId: study.id,
				recordType: 'run',
				recordId: run.id,
				ipAddress: contextOf(event).ipAddress,
				details: { source, rule, times, previous: before?.times ?? null }
			},
			t
		);
		return { times, source, rule, updatedAt: new Date(saved[0].updated_at).toISOString() };
	});
}

// ---------------------------------------------------------------------------------------------- comparisons

export const COMPARE_QUANTITIES = ['moment', 'moment_per_kg', 'angle', 'power'] as const satisfies readonly (typeof SERIES_QUANTITIES)[number][];
export type CompareQuantity = (typeof COMPARE_QUANTITIES)[number];

export interface CompareGroup {
	label: string;
	/** Runs used, cycles pooled, and how each run was time-normalised. */
	runs: number;
	cycles: number;
	byEvents: number;
	wholeTrials: number;
	/** Repetitions left out because they overlap an edge zone (0 when edge zones are included). */
	leftOut: number;
	/** Whole trials normalised without their edge zones (0 when edge zones are included). */
	trimmed: number;
	dofs: { name: string; unit: string; positive: string | null; mean: (number | null)[]; sd: (number | null)[]; n: number; peakMax: { mean: number | null; sd: number | null }; peakMin: { mean: number | null; sd: number | null } }[];
}

/** Per DOF: its unit, sign rule and time-normalised cycles. */
type Pooled = Map<string, { unit: string; positive: string | null; cycles: number[][] }>;

/**
 * Normalised cycles (events) or the whole trial of one run, per DOF. Unless edge zones are included, a repetition
 * that overlaps the run's edge zone is left out, and a whole trial is normalised from its first to its last sample
 * outside the zone (nothing when the zone covers the trial).
 */
async function runCycles(runId: string, quantity: CompareQuantity, includeEdgeZones: boolean): Promise<{ basis: 'events' | 'whole'; count: number; leftOut: number; trimmed: boolean; byDof: Pooled }> {
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

const ids = (sp: URLSearchParams, key: string) => sp.getAll(key).filter(isUuid).map((x) => x.toLowerCase());

/** The compare page: pick lists (codes and dates only) and the chosen comparison. */
export async function loadCompare(event: RequestEvent, rawStudyId: string) {
	const { actor, study } = await guardStudy(event, 'study.read', rawStudyId);
	const sp = event.url.searchParams;
	const mode = sp.get('mode') === 'group' ? 'group' : 'sessions';
	const quantity = (COMPARE_QUANTITIES as readonly string[]).includes(sp.get('quantity') ?? '') ? (sp.get('quantity') as CompareQuantity) : 'moment';
	const participants = await db().query<{ id: string; code: string; done: string | number }>(
		`SELECT p.id, p.code, (SELECT count(*) FROM runs r JOIN trials t ON t.id = r.trial_id JOIN sessions s ON s.id = t.session_id
		                        WHERE s.participant_id = p.id AND r.state = 'done' AND r.flag_decision IS DISTINCT FROM 'exclude') AS done
		   FROM participants p WHERE p.study_id = :studyId ORDER BY p.code`,
		{ replacements: { studyId: study.id }, type: QueryTypes.SELECT }
	);
	const participantId = ids(sp, 'participant')[0] ?? null;
	const chosenP = participants.find((p) => p.id === participantId) ?? null;
	const sessions = chosenP
		? await db().query<{ id: string; sessionOn: string; task: string }>(
				`SELECT id, session_on::text AS "sessionOn", task FROM sessions WHERE participant_id = :pid AND study_id = :studyId ORDER BY session_on, created_at`,
				{ replacements: { pid: chosenP.id, studyId: study.id }, type: QueryTypes.SELECT }
			)
		: [];
	const groups: CompareGroup[] = [];
	const allRuns = sp.get('runs') === 'all';
	const includeEdgeZones = includeEdgeZonesOf(sp);
	if (mode === 'sessions' && chosenP) {
		for (const sid of ids(sp, 'session').filter((x) => sessions.some((s) => s.id === x))) {
			const s = sessions.find((x) => x.id === sid)!;
			const rows = (await doneRuns('s.id = :sid', { sid })).filter((r) => allRuns || r.latest);
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
			const rows = (await doneRuns('p.id = :pid AND s.study_id = :studyId', { pid, studyId: study.id })).filter((r) => allRuns || r.latest);
			const own = await collect(rows, quantity, counts, includeEdgeZones);
			const means: Pooled = new Map();
			// a participant all of whose repetitions were left out contributes no curve
			for (const [name, d] of own) if (d.cycles.length) means.set(name, { ...d, cycles: [meanSd(d.cycles).mean] });
			pool(perParticipant, means);
		}
		if (chosen.length) groups.push(summarise(`Group of ${chosen.length} participant${chosen.length === 1 ? '' : 's'}`, perParticipant, counts));
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
		canMarkEvents: may(actor, 'run.start', study.id)
	};
}
