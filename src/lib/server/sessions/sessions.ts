// Sessions of a participant (one visit): date, operator, task, conditions and the model set-up, created only
// with valid consent; the set-up form is checked by the session model's own schema, field by field.
import { conflict, FormProblem, notFound } from '../errors';
import { isLocked, refuseIfLocked } from './lock';
import type { Transaction } from 'sequelize';
import { z } from 'zod';
import { db } from '../db/index';
import { MappingPreset, Participant, ParticipantLength, Session, Trial, type SessionState, type Study } from '../db/models';
import { may, studyFor, type Actor } from '../access/guard';
import type { RequestContext } from '../access/context';
import { record } from '../audit/record';
import { isUuid } from '../studies/studies';
import { consentStateOf, requireValidConsent, CONSENT_STATE_LABEL } from '../consent/check';
import { participantIn } from '../participants/records';
import type {
	PresetView,
	SessionFormChoices,
	SessionFormPage,
	SessionFormValues,
	SessionPageSession,
	SessionRow,
	TrialView
} from '../../types/sessions';
import { LIMBS, type ParticipantBody } from '../../anthropometry/scale';
import { SEGMENT_TABLES, SEGMENT_TABLE_IDS, type SegmentTableId } from '../../anthropometry/tables';
import {
	BASE_DOFS,
	buildSessionModel,
	HIP_WIDTH_RANGE_M,
	LOAD_SEGMENTS,
	PELVIS_HIP_WIDTH_SOURCE,
	sessionSetupSchema,
	type SessionSetup
} from '../../processing/session-model';

/** States in which the session's record and trials may still change (approved sessions are locked). */
export const EDITABLE_STATES: readonly SessionState[] = ['draft', 'returned'];

export const BASE_CHOICES = ['upright', 'thigh-on-seat', 'custom', 'moving'] as const;
export type BaseChoice = (typeof BASE_CHOICES)[number];

/** How many load rows the form offers without JavaScript. */
export const LOAD_ROWS = 3;

const ISO_DATE = /^\d{4}-\d{2}-\d{2}$/;
const metaSchema = z.object({
	sessionOn: z
		.string()
		.trim()
		.refine((v) => ISO_DATE.test(v) && !Number.isNaN(Date.parse(v)), 'Enter the date of the session (YYYY-MM-DD).')
		.refine((v) => v <= new Date().toISOString().slice(0, 10), 'The session date cannot be in the future.'),
	operator: z.string().trim().min(1, 'Enter who ran the session.').max(200, 'Keep the operator under 200 characters.'),
	task: z
		.string()
		.trim()
		.min(1, 'Enter the task (e.g. "reach to the top shelf with a 2 kg box").')
		.max(200, 'Keep the task under 200 characters.'),
	conditions: z
		.string()
		.trim()
		.max(2000, 'Keep the conditions under 2000 characters.')
		.transform((v) => v || null)
});
export type SessionMeta = z.infer<typeof metaSchema>;

const str = (form: FormData, k: string) => String(form.get(k) ?? '').trim();

/** "a, b, c" → three finite numbers, or null. */
function triple(text: string): [number, number, number] | null {
	const parts = text.split(/[,;\s]+/).filter(Boolean);
	if (parts.length !== 3) return null;
	const v = parts.map(Number);
	return v.every(Number.isFinite) ? (v as [number, number, number]) : null;
}

/** Nine finite numbers, row by row ("r11, r12, r13; r21, …"), as a 3×3 matrix, or null. */
function matrix9(text: string): [[number, number, number], [number, number, number], [number, number, number]] | null {
	const parts = text.split(/[,;\s]+/).filter(Boolean);
	if (parts.length !== 9) return null;
	const v = parts.map(Number);
	if (!v.every(Number.isFinite)) return null;
	return [v.slice(0, 3), v.slice(3, 6), v.slice(6, 9)] as [[number, number, number], [number, number, number], [number, number, number]];
}

/**
 * Reads the session form into meta fields and a SessionSetup; errors are keyed by the form's own field names
 * (sessionOn, limbs, base.right.arm, cardan.right.arm, load.0.massKg …) so each shows beside its input.
 */
export function parseSessionForm(form: FormData): { meta: SessionMeta; setup: SessionSetup } {
	const errors: Record<string, string> = {};
	const m = metaSchema.safeParse({
		sessionOn: str(form, 'sessionOn'),
		operator: str(form, 'operator'),
		task: str(form, 'task'),
		conditions: str(form, 'conditions')
	});
	if (!m.success) for (const i of m.error.issues) errors[String(i.path[0])] ??= i.message;

	const limbs = form.getAll('limbs').map(String);
	const unknownLimb = limbs.find((l) => !(LIMBS as readonly string[]).includes(l));
	if (unknownLimb) errors.limbs = `Unknown limb "${unknownLimb}": choose from the list.`;

	// gait: both legs on one moving pelvis (setupKind=pelvis); per-limb bases are then not read
	const gait = str(form, 'setupKind') === 'pelvis';
	let pelvis: Record<string, number> | undefined;
	if (gait) {
		const mmText = str(form, 'hipWidthMm').replace(',', '.');
		const mm = Number(mmText);
		if (!mmText) pelvis = {};
		else if (!Number.isFinite(mm))
			errors.hipWidthMm = 'Enter the distance between the hip joint centres in mm (e.g. 180), or leave it empty.';
		else pelvis = { hipWidthM: mm / 1000 };
	}

	const bases: Record<string, unknown> = {};
	for (const limb of gait ? [] : limbs) {
		const choice = str(form, `base.${limb}`) || 'upright';
		if (!(BASE_CHOICES as readonly string[]).includes(choice)) {
			errors[`base.${limb}`] = 'Choose how the base of this limb is held.';
			continue;
		}
		if (choice === 'moving') bases[limb] = { kind: 'moving' };
		else if (choice === 'custom') {
			// three Cardan angles, or the nine entries of the rotation matrix (body → lab) row by row
			const text = str(form, `cardan.${limb}`);
			const c = triple(text);
			const m = c ? null : matrix9(text);
			if (c) bases[limb] = { kind: 'fixed', orientation: 'custom', cardanXYZDeg: c };
			else if (m) bases[limb] = { kind: 'fixed', orientation: 'custom', rotationMatrix: m };
			else
				errors[`cardan.${limb}`] =
					'Enter three angles (°), X then Y then Z (e.g. "0, 0, 90"), or the nine entries of the rotation matrix row by row.';
		} else bases[limb] = { kind: 'fixed', orientation: choice };
	}

	const loads: unknown[] = [];
	const loadRow: number[] = [];
	for (let i = 0; i < 20; i++) {
		const massText = str(form, `load.${i}.massKg`);
		const pointText = str(form, `load.${i}.point`);
		if (!massText && !pointText && !form.has(`load.${i}.limb`)) continue;
		if (!massText && !pointText) continue; // an untouched row
		const mass = Number(massText);
		if (!massText || !Number.isFinite(mass)) {
			errors[`load.${i}.massKg`] = 'Enter the mass in kg (e.g. 2.5).';
			continue;
		}
		const point = pointText ? triple(pointText) : null;
		if (!point) {
			errors[`load.${i}.point`] =
				'Enter where the mass sits, x, y, z in m in the segment frame from its proximal joint (e.g. "0, -0.08, 0").';
			continue;
		}
		const label = str(form, `load.${i}.label`);
		loads.push({
			limb: str(form, `load.${i}.limb`),
			segment: str(form, `load.${i}.segment`),
			massKg: mass,
			pointM: point,
			...(label ? { label } : {})
		});
		loadRow.push(i);
	}

	const raw = { table: str(form, 'table'), limbs, bases, loads, ...(pelvis ? { pelvis } : {}) };
	const s = sessionSetupSchema.safeParse(raw);
	if (!s.success) {
		for (const i of s.error.issues) {
			const [head, a, b] = i.path as (string | number)[];
			let key = String(head ?? 'form');
			if (head === 'bases' && a !== undefined) key = b === 'cardanXYZDeg' || b === 'rotationMatrix' ? `cardan.${a}` : `base.${a}`;
			if (head === 'loads' && typeof a === 'number') key = `load.${loadRow[a]}.${b === 'pointM' ? 'point' : String(b ?? 'massKg')}`;
			if (head === 'pelvis') {
				// the form takes millimetres
				errors.hipWidthMm ??= `Enter the distance between the hip joint centres from ${HIP_WIDTH_RANGE_M.min * 1000} to ${HIP_WIDTH_RANGE_M.max * 1000} mm, or leave it empty for the default.`;
				continue;
			}
			// sentence case, except a message that opens with a name such as right.leg
			const msg = /^[a-z]+ /.test(i.message) ? i.message.charAt(0).toUpperCase() + i.message.slice(1) : i.message;
			errors[key] ??= msg.endsWith('.') ? msg : `${msg}.`;
		}
	}
	if (Object.keys(errors).length || !m.success || !s.success) throw new FormProblem(errors);
	return { meta: m.data, setup: s.data };
}

/** A session's set-up as the form shows it again (for editing, and after a refused post). */
export function formValuesOf(meta: Partial<SessionMeta>, setup: SessionSetup | null): SessionFormValues {
	const v: SessionFormValues = {
		sessionOn: meta.sessionOn ?? '',
		operator: meta.operator ?? '',
		task: meta.task ?? '',
		conditions: meta.conditions ?? ''
	};
	if (!setup) return v;
	v.table = setup.table;
	v.limbs = [...setup.limbs];
	if (setup.pelvis) {
		v.setupKind = 'pelvis';
		if (setup.pelvis.hipWidthM !== undefined) v.hipWidthMm = String(Number((setup.pelvis.hipWidthM * 1000).toFixed(3)));
	}
	for (const limb of setup.limbs) {
		const b = setup.bases[limb];
		v[`base.${limb}`] = !b ? 'upright' : b.kind === 'moving' ? 'moving' : b.orientation;
		if (b?.kind === 'fixed' && b.cardanXYZDeg) v[`cardan.${limb}`] = b.cardanXYZDeg.join(', ');
		if (b?.kind === 'fixed' && b.rotationMatrix) v[`cardan.${limb}`] = b.rotationMatrix.map((row) => row.join(', ')).join('; ');
	}
	setup.loads.forEach((l, i) => {
		v[`load.${i}.limb`] = l.limb;
		v[`load.${i}.segment`] = l.segment;
		v[`load.${i}.massKg`] = String(l.massKg);
		v[`load.${i}.point`] = l.pointM.join(', ');
		v[`load.${i}.label`] = l.label ?? '';
	});
	return v;
}

/** The raw form as the page shows it again after a refused post. */
export function formValuesFrom(form: FormData): SessionFormValues {
	const v: SessionFormValues = {};
	for (const [k, val] of form.entries()) {
		if (k === 'limbs') v.limbs = [...((v.limbs as string[]) ?? []), String(val)];
		else v[k] = String(val);
	}
	v.limbs ??= [];
	return v;
}

/** What the form needs to offer its choices. */
export function formChoices(): SessionFormChoices {
	return {
		limbs: LIMBS as readonly string[],
		tables: SEGMENT_TABLE_IDS.map((id) => ({ id, title: SEGMENT_TABLES[id].title })),
		baseChoices: BASE_CHOICES as readonly string[],
		loadSegments: LOAD_SEGMENTS as readonly string[],
		loadRows: LOAD_ROWS,
		pelvis: {
			columns: BASE_DOFS.map((d) => `pelvis.${d}`),
			hipWidthSource: PELVIS_HIP_WIDTH_SOURCE,
			hipWidthMm: { min: HIP_WIDTH_RANGE_M.min * 1000, max: HIP_WIDTH_RANGE_M.max * 1000 }
		}
	};
}

/** A session of the study in the URL (another study's session is not-found, as an unknown one). */
export async function sessionIn(studyId: string, rawSid: string, transaction?: Transaction): Promise<Session> {
	const s = isUuid(rawSid) ? await Session.findOne({ where: { id: rawSid.toLowerCase(), studyId }, transaction }) : null;
	if (!s) throw notFound();
	return s;
}

/** The study (guarded for `action`) and one of its sessions: what most session services start with. */
export async function studySession(actor: Actor | null, ctx: RequestContext, action: Parameters<typeof studyFor>[2], ref: SessionRef) {
	const guarded = await studyFor(actor, ctx, action, ref.studyId);
	return { ...guarded, session: await sessionIn(guarded.study.id, ref.sessionId) };
}

/** Which session: the study and session ids as they came in the URL. */
export interface SessionRef {
	studyId: string;
	sessionId: string;
}

/** Which participant: the study and participant ids as they came in the URL. */
export interface ParticipantRef {
	studyId: string;
	participantId: string;
}

/**
 * The participant as the scaling code takes it, with the latest measured length of each segment. A participant
 * whose sex is "not reported" is scaled with the mean of the female and male table values (a stated choice).
 */
export async function participantBodyOf(participantId: string, transaction?: Transaction): Promise<ParticipantBody> {
	const p = await Participant.findByPk(participantId, { transaction });
	if (!p) throw new Error(`participant ${participantId} does not exist`);
	const lengths = await ParticipantLength.findAll({
		where: { participantId },
		order: [
			['measuredOn', 'DESC'],
			['createdAt', 'DESC']
		],
		transaction
	});
	const measuredLengths: Record<string, number> = {};
	for (const l of lengths) measuredLengths[l.segment] ??= l.lengthM;
	return {
		sex: p.sex,
		bodyMass: p.bodyMassKg,
		stature: p.statureM,
		measuredLengths: measuredLengths as ParticipantBody['measuredLengths'],
		...(p.sex === 'not reported' ? { notReportedAs: 'mean' as const } : {})
	};
}

/** Builds the session model or turns its refusal into form messages (a participant outside the tables' ranges). */
function checkModel(body: ParticipantBody, setup: SessionSetup) {
	try {
		return buildSessionModel(body, setup);
	} catch (err) {
		const problems = (err as { problems?: string[] }).problems;
		if (Array.isArray(problems)) throw new FormProblem({ form: `The model cannot be built for this participant: ${problems.join('; ')}` });
		throw err;
	}
}

/** The part of the new-session and edit pages they share: whose session, and the form's choices. */
const formPage = (study: Study, p: Participant): SessionFormPage => ({
	study: { id: study.id, code: study.code, title: study.title, defaultTable: study.defaultTable as SegmentTableId },
	participant: { id: p.id, code: p.code },
	choices: formChoices()
});

/** An audit entry about a session (created, edited, each workflow step, signing codes). */
export function recordSession(
	actor: Actor,
	ctx: RequestContext,
	action: string,
	ids: { studyId: string; sessionId: string },
	details: Record<string, unknown>,
	opts: { outcome?: 'failed'; transaction?: Transaction } = {}
) {
	const entry = {
		action,
		actorUserId: actor.id,
		actorLabel: actor.email,
		outcome: opts.outcome,
		studyId: ids.studyId,
		recordType: 'session',
		recordId: ids.sessionId,
		ipAddress: ctx.ipAddress,
		details
	};
	return record(entry, opts.transaction);
}

/** What the new-session page needs: the participant, the study's default table, consent. */
export async function newSessionForm(actor: Actor | null, ctx: RequestContext, ref: ParticipantRef) {
	const { study } = await studyFor(actor, ctx, 'session.create', ref.studyId);
	const p = await participantIn(study.id, ref.participantId);
	const consent = await consentStateOf(p.id);
	return { ...formPage(study, p), consent: { state: consent.state, label: CONSENT_STATE_LABEL[consent.state] } };
}

/** Adds a session (state draft) for a consented participant from the session form. Audited. */
export async function createSession(
	actor: Actor | null,
	ctx: RequestContext,
	input: ParticipantRef & { form: FormData }
): Promise<{ id: string }> {
	const { actor: a, study } = await studyFor(actor, ctx, 'session.create', input.studyId);
	const p = await participantIn(study.id, input.participantId);
	const { meta, setup } = parseSessionForm(input.form);
	checkModel(await participantBodyOf(p.id), setup);
	return db().transaction(async (transaction) => {
		await requireValidConsent(p.id, 'session', transaction);
		const s = await Session.create({ studyId: study.id, participantId: p.id, ...meta, setup, createdBy: a.id }, { transaction });
		const details = { participant: p.code, sessionOn: meta.sessionOn, task: meta.task, limbs: setup.limbs, table: setup.table };
		await recordSession(a, ctx, 'session.created', { studyId: study.id, sessionId: s.id }, details, { transaction });
		return { id: s.id };
	});
}

/** What the edit page needs. */
export async function editSessionForm(actor: Actor | null, ctx: RequestContext, ref: SessionRef) {
	const { study, session: s } = await studySession(actor, ctx, 'session.edit', ref);
	const p = await participantIn(study.id, s.participantId);
	return {
		...formPage(study, p),
		session: { id: s.id, state: s.state, editable: EDITABLE_STATES.includes(s.state) },
		initial: formValuesOf(s, s.setup)
	};
}

/** The names of the channels a file must contain, in order, as one comparable string. */
const channelKey = (model: ReturnType<typeof buildSessionModel>) => model.expected.map((c) => c.name).join('|');

/**
 * Changes a session's record and set-up from the session form while it is a draft or returned. Once trials exist,
 * a change that would alter the channels a file must contain is refused: those trials were checked against the old ones.
 */
export async function editSession(actor: Actor | null, ctx: RequestContext, input: SessionRef & { form: FormData }): Promise<void> {
	const { actor: a, study, session: found } = await studySession(actor, ctx, 'session.edit', input);
	refuseIfLocked(found.state);
	const { meta, setup } = parseSessionForm(input.form);
	const body = await participantBodyOf(found.participantId);
	const next = checkModel(body, setup);
	await db().transaction(async (transaction) => {
		const s = (await Session.findByPk(found.id, { transaction, lock: transaction.LOCK.UPDATE }))!;
		refuseIfLocked(s.state);
		if (!EDITABLE_STATES.includes(s.state))
			throw conflict(`This session is ${s.state.replace('_', ' ')}; it can be changed only while it is a draft or returned.`);
		const trials = await Trial.count({ where: { sessionId: s.id }, transaction });
		if (trials > 0 && channelKey(buildSessionModel(body, s.setup)) !== channelKey(next))
			throw new FormProblem({
				limbs: `This session already has ${trials} trial${trials === 1 ? '' : 's'} checked against its current limbs and bases; changing them would change the channels a file must contain. Start a new session instead.`
			});
		const changed: string[] = (['sessionOn', 'operator', 'task', 'conditions'] as const).filter((k) => s[k] !== meta[k]);
		if (JSON.stringify(s.setup) !== JSON.stringify(setup)) changed.push('setup');
		if (changed.length === 0) return;
		await s.update({ ...meta, setup, updatedAt: new Date() }, { transaction });
		await recordSession(a, ctx, 'session.edited', { studyId: study.id, sessionId: s.id }, { changed }, { transaction });
	});
}

/** The sessions of a participant, newest first, with their trial counts (for the participant page). */
export async function listSessionsOfParticipant(
	actor: Actor | null,
	ctx: RequestContext,
	ref: ParticipantRef
): Promise<{ sessions: SessionRow[]; mayCreate: boolean }> {
	const { actor: a, study } = await studyFor(actor, ctx, 'study.read', ref.studyId);
	const p = await participantIn(study.id, ref.participantId);
	const rows = await Session.findAll({
		where: { participantId: p.id, studyId: study.id },
		order: [
			['sessionOn', 'DESC'],
			['createdAt', 'DESC']
		]
	});
	const counts = new Map<string, number>();
	if (rows.length)
		for (const r of await Trial.count({ where: { sessionId: rows.map((r) => r.id) }, group: ['sessionId'] }))
			counts.set(String(r.sessionId), Number(r.count));
	return {
		sessions: rows.map((s) => ({
			id: s.id,
			sessionOn: s.sessionOn,
			operator: s.operator,
			task: s.task,
			state: s.state,
			limbs: [...s.setup.limbs],
			trials: counts.get(s.id) ?? 0
		})),
		mayCreate: may(a, 'session.create', study.id)
	};
}

export const trialView = (t: Trial): TrialView => ({
	id: t.id,
	fileName: t.fileName,
	sha256: t.sha256,
	frameCount: t.frameCount,
	sampleHz: t.sampleHz,
	durationS: t.durationS,
	channels: t.channels,
	warnings: (t.warnings ?? []) as TrialView['warnings'],
	mapped: t.mapping !== null,
	createdAt: t.createdAt.toISOString(),
	force:
		t.forceRawUploadId && t.forceFileName && t.forceSha256 && t.forceSampleHz
			? { fileName: t.forceFileName, sha256: t.forceSha256, sampleHz: t.forceSampleHz, plates: t.forcePlates ?? [] }
			: null
});

export const presetView = (m: MappingPreset): PresetView => ({
	id: m.id,
	name: m.name,
	mapping: m.mapping,
	createdAt: m.createdAt.toISOString()
});

/** Everything the session page shows: set-up, expected channels, trials, presets and what the person may do. */
export async function readSession(actor: Actor | null, ctx: RequestContext, ref: SessionRef) {
	const { actor: a, study, session: s } = await studySession(actor, ctx, 'study.read', ref);
	const p = await participantIn(study.id, s.participantId);
	const setup = s.setup;
	let expected: { name: string; kind: 'angle' | 'position' }[] = [];
	let modelProblem: string | null = null;
	try {
		expected = buildSessionModel(await participantBodyOf(p.id), setup).expected;
	} catch (err) {
		modelProblem = (err as Error).message;
	}
	const trials = await Trial.findAll({ where: { sessionId: s.id }, order: [['createdAt', 'ASC']] });
	const presets = await MappingPreset.findAll({ where: { studyId: study.id }, order: [['name', 'ASC']] });
	const consent = await consentStateOf(p.id);
	const editable = EDITABLE_STATES.includes(s.state);
	const session: SessionPageSession = {
		id: s.id,
		sessionOn: s.sessionOn,
		operator: s.operator,
		task: s.task,
		conditions: s.conditions,
		state: s.state,
		setup,
		tableTitle: SEGMENT_TABLES[setup.table as SegmentTableId]?.title ?? setup.table,
		createdAt: s.createdAt.toISOString()
	};
	return {
		study: { id: study.id, code: study.code, title: study.title },
		participant: { id: p.id, code: p.code },
		session,
		expected,
		modelProblem,
		trials: trials.map(trialView),
		presets: presets.map(presetView),
		consent: { state: consent.state, label: CONSENT_STATE_LABEL[consent.state], valid: consent.state === 'consented' },
		may: {
			upload: editable && may(a, 'trial.upload', study.id),
			savePreset: may(a, 'mapping.preset', study.id),
			edit: editable && may(a, 'session.edit', study.id),
			startRun: !isLocked(s.state) && may(a, 'run.start', study.id),
			export: s.state === 'approved' && may(a, 'session.export', study.id)
		}
	};
}
