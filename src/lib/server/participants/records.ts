// Participants of a study: research data for the whole team, personal data (name, e-mail, phone) only for
// roles allowed 'participant.personal.read'; codes are issued from the study's counter in one transaction.
import { FormProblem, notFound } from '../errors';
import { Op, type Transaction, type WhereOptions } from 'sequelize';
import { z } from 'zod';
import { db } from '../db/index';
import { Participant, ParticipantLength, ParticipantPersonal, Study } from '../db/models';
import { may, studyFor, type Actor, type StudyAction } from '../access/guard';
import type { RequestContext } from '../access/context';
import { record } from '../audit/record';
import { isUuid } from '../studies/studies';
import { fieldErrors } from '../studies/records';
import { consentStatesOf } from '../consent/check';
import { LENGTH_KEYS, participantBodySchema } from '../../anthropometry/scale';

import { PAGE_SIZE, SORTS, type LengthView, type ListQuery, type ParticipantRow, type Personal, type Sort } from '../../types/participants';
export { PAGE_SIZE, SORTS, type Sort, type Personal, type ParticipantRow, type ListQuery, type LengthView };
const SORT_COLUMNS: Record<Sort, string> = { code: 'code', created: 'createdAt', mass: 'bodyMassKg', stature: 'statureM' };

export function parseListQuery(url: URL): ListQuery {
	const sort = (SORTS as readonly string[]).includes(url.searchParams.get('sort') ?? '') ? (url.searchParams.get('sort') as Sort) : 'code';
	const dir = url.searchParams.get('dir') === 'desc' ? 'desc' : 'asc';
	const page = Math.max(1, Math.min(10_000, Number.parseInt(url.searchParams.get('page') ?? '1', 10) || 1));
	const q = (url.searchParams.get('q') ?? '').trim().slice(0, 40);
	return { q, sort, dir, page };
}

const personalOf = (p: ParticipantPersonal | null | undefined): Personal => ({
	fullName: p?.fullName ?? null,
	email: p?.email ?? null,
	phone: p?.phone ?? null
});

/** The research fields the list and the participant's page show. */
const researchOf = (p: Participant) => ({
	id: p.id,
	code: p.code,
	sex: p.sex,
	birthYear: p.birthYear,
	bodyMassKg: p.bodyMassKg,
	statureM: p.statureM
});

function rowOf(p: Participant, personal: ParticipantPersonal | null | undefined, seesPersonal: boolean): ParticipantRow {
	const row: ParticipantRow = { ...researchOf(p), createdOn: p.createdAt.toISOString().slice(0, 10) };
	if (seesPersonal) row.personal = personalOf(personal);
	return row;
}

/** The study's participants, searched by code on the server, sorted and paged. */
export async function listParticipants(actor: Actor | null, ctx: RequestContext, rawId: string, query: ListQuery) {
	const { actor: a, study } = await studyFor(actor, ctx, 'study.read', rawId);
	const seesPersonal = may(a, 'participant.personal.read', study.id);
	const where: WhereOptions<Participant> = { studyId: study.id };
	if (query.q) Object.assign(where, { code: { [Op.iLike]: `%${query.q.replace(/[\\%_]/g, (c) => '\\' + c)}%` } });
	const { rows, count } = await Participant.findAndCountAll({
		where,
		order: [
			[SORT_COLUMNS[query.sort], query.dir.toUpperCase()],
			['code', 'ASC']
		],
		limit: PAGE_SIZE,
		offset: (query.page - 1) * PAGE_SIZE
	});
	const personal =
		seesPersonal && rows.length ? await ParticipantPersonal.findAll({ where: { participantId: rows.map((r) => r.id) } }) : [];
	const byId = new Map(personal.map((p) => [p.participantId, p]));
	const consentStates = await consentStatesOf(rows.map((r) => r.id));
	return {
		study: { id: study.id, code: study.code, title: study.title },
		query,
		total: count,
		pages: Math.max(1, Math.ceil(count / PAGE_SIZE)),
		seesPersonal,
		mayCreate: may(a, 'participant.create', study.id),
		mayImport: may(a, 'participant.import', study.id),
		participants: rows.map((p) => ({
			...rowOf(p, byId.get(p.id), seesPersonal),
			consentState: consentStates.get(p.id) ?? ('not_invited' as const)
		}))
	};
}

const body = participantBodySchema.shape;
const optionalText = (max: number, label: string) =>
	z
		.string()
		.trim()
		.max(max, `Keep ${label} under ${max} characters.`)
		.transform((v) => v || null);
const thisYear = new Date().getUTCFullYear();
const numberField = (label: string) => z.string().trim().min(1, `Enter ${label}.`).transform(Number);

/** The create form's rules, one field per key; the CSV import checks each row with the same schema. */
export const participantSchema = z.object({
	sex: body.sex,
	// the ranges are those of participantBodySchema (the scaling code refuses anything outside them)
	bodyMassKg: numberField('the body mass in kg').pipe(body.bodyMass),
	statureM: numberField('the stature in m').pipe(body.stature),
	birthYear: z
		.string()
		.trim()
		.refine(
			(v) => v === '' || (/^\d{4}$/.test(v) && Number(v) >= 1900 && Number(v) <= thisYear),
			`Enter a year between 1900 and ${thisYear}, or leave it empty.`
		)
		.transform((v) => (v ? Number(v) : null)),
	dominantSide: z.enum(['', 'left', 'right'], { error: 'Choose left, right or not recorded.' }).transform((v) => v || null),
	notes: optionalText(2000, 'the notes'),
	fullName: optionalText(200, 'the name'),
	email: z
		.string()
		.trim()
		.toLowerCase()
		.refine((v) => v === '' || z.email().safeParse(v).success, 'Enter an e-mail address such as name@example.org, or leave it empty.')
		.transform((v) => v || null),
	phone: z
		.string()
		.trim()
		.refine(
			(v) => v === '' || /^\+?[0-9 ()\-/.]{5,30}$/.test(v),
			'Enter a phone number of digits, spaces and + ( ) - only, or leave it empty.'
		)
		.transform((v) => v || null)
});
export type ParticipantInput = z.infer<typeof participantSchema>;
const FIELDS = Object.keys(participantSchema.shape) as (keyof typeof participantSchema.shape)[];

export const PERSONAL_FIELDS = ['fullName', 'email', 'phone'] as const;
const personalSchema = participantSchema.pick({ fullName: true, email: true, phone: true });
/** Which personal fields were entered, never their values (for the audit log). */
export const personalFieldsOf = (input: ParticipantInput) => PERSONAL_FIELDS.filter((k) => input[k] !== null);
export const RESEARCH_FIELDS = ['sex', 'birthYear', 'bodyMassKg', 'statureM', 'dominantSide', 'notes'] as const;
export type ResearchField = (typeof RESEARCH_FIELDS)[number];
const researchSchema = participantSchema.pick({
	sex: true,
	birthYear: true,
	bodyMassKg: true,
	statureM: true,
	dominantSide: true,
	notes: true
});

/** Form values: what a form posted, by field name. */
export type FormFields = Record<string, string>;

/** Checks form values against a schema; the problems come back one per field (a missing field counts as empty). */
function parseWith<T extends z.ZodType>(schema: T, values: FormFields, keys: readonly string[]): z.infer<T> {
	const r = schema.safeParse(Object.fromEntries(keys.map((k) => [k, values[k] ?? ''])));
	if (!r.success) throw new FormProblem(fieldErrors(r.error.issues));
	return r.data;
}

/** Writes one audit row about a participant (in the caller's transaction, when given). */
function audit(
	actor: Actor,
	ctx: RequestContext,
	study: Study,
	p: Pick<Participant, 'id'>,
	action: string,
	details?: Record<string, unknown>,
	transaction?: Transaction
) {
	return record(
		{
			action,
			actorUserId: actor.id,
			actorLabel: actor.email,
			studyId: study.id,
			recordType: 'participant',
			recordId: p.id,
			ipAddress: ctx.ipAddress,
			details
		},
		transaction
	);
}

/** A service behind one of the participant page's forms: (actor, ctx, study id, participant id, the form's values). */
export type ParticipantForm<R> = (
	actor: Actor | null,
	ctx: RequestContext,
	rawId: string,
	rawPid: string,
	values: FormFields
) => Promise<R>;

/** What saving a participant form works with, inside its transaction; `audit` writes the change's row in it. */
interface FormSave<T> {
	p: Participant;
	data: T;
	transaction: Transaction;
	audit: (action: string, details: Record<string, unknown>) => Promise<unknown>;
}

/**
 * A participant form's service: the action guarded on the study, the participant found in it, the values checked
 * against `schema` (field by field), then `save` in one transaction.
 */
function participantForm<S extends z.ZodType, R>(
	action: StudyAction,
	schema: S,
	fields: readonly string[],
	save: (c: FormSave<z.infer<S>>) => Promise<R>
): ParticipantForm<R> {
	return async (actor, ctx, rawId, rawPid, values) => {
		const { actor: a, study, participant: p } = await participantFor(actor, ctx, action, rawId, rawPid);
		const data = parseWith(schema, values, fields);
		return db().transaction((transaction) =>
			save({ p, data, transaction, audit: (what, details) => audit(a, ctx, study, p, what, details, transaction) })
		);
	};
}

/**
 * Corrects a participant's research fields. The audit row keeps before and after of each changed field, except
 * the notes, whose text stays out of the append-only log (a name typed there by mistake must be removable).
 */
export const updateResearchFields = participantForm(
	'participant.edit',
	researchSchema,
	RESEARCH_FIELDS,
	async ({ p, data, transaction, audit }) => {
		const row = (await Participant.findByPk(p.id, { transaction, lock: transaction.LOCK.UPDATE }))!;
		const changed: ResearchField[] = RESEARCH_FIELDS.filter((k) => row[k] !== data[k]);
		if (changed.length === 0) return { changed };
		const before: Record<string, unknown> = {};
		const after: Record<string, unknown> = {};
		for (const k of changed) {
			if (k === 'notes') continue;
			before[k] = row[k];
			after[k] = data[k];
		}
		await row.update(data, { transaction });
		await audit('participant.research.changed', { code: p.code, changed, before, after });
		return { changed };
	}
);

/** Corrects a participant's personal data; the audit row names the fields that changed, never their values. */
export const savePersonal = participantForm(
	'participant.personal.edit',
	personalSchema,
	PERSONAL_FIELDS,
	async ({ p, data, transaction, audit }) => {
		const [row] = await ParticipantPersonal.findOrCreate({
			where: { participantId: p.id },
			defaults: { participantId: p.id, fullName: null, email: null, phone: null },
			transaction
		});
		const changed = PERSONAL_FIELDS.filter((k) => row[k] !== data[k]);
		if (changed.length === 0) return;
		await row.update(data, { transaction });
		await audit('participant.personal.changed', { code: p.code, changed });
	}
);

export function parseParticipant(values: FormFields): ParticipantInput {
	return parseWith(participantSchema, values, FIELDS);
}

export const formatCode = (prefix: string, n: number) => `${prefix}-${String(n).padStart(3, '0')}`;
/** The study's code prefix: the one set for it, else the letters of its protocol code. */
export const prefixOf = (s: Pick<Study, 'participantPrefix' | 'code'>) =>
	s.participantPrefix ??
	s.code
		.replace(/[^A-Z]/gi, '')
		.slice(0, 3)
		.toUpperCase();

/** The participants row of a new participant (research fields only). */
export const researchRowOf = (studyId: string, code: string, input: ParticipantInput) => ({
	studyId,
	code,
	sex: input.sex,
	birthYear: input.birthYear,
	bodyMassKg: input.bodyMassKg,
	statureM: input.statureM,
	dominantSide: input.dominantSide,
	notes: input.notes
});
/** The personal-data row of a new participant (its own table). */
export const personalRowOf = (participantId: string, input: ParticipantInput) => ({
	participantId,
	fullName: input.fullName,
	email: input.email,
	phone: input.phone
});

/** Adds a participant with the next code of the study; personal data goes to its own table. Audited. */
export async function createParticipant(
	actor: Actor | null,
	ctx: RequestContext,
	rawId: string,
	values: FormFields
): Promise<{ id: string; code: string }> {
	const { actor: a, study } = await studyFor(actor, ctx, 'participant.create', rawId);
	const input = parseParticipant(values);
	return db().transaction(async (transaction) => {
		// the row lock makes concurrent additions take turns, so codes stay sequential and unique
		const locked = (await Study.findByPk(study.id, { transaction, lock: transaction.LOCK.UPDATE }))!;
		const prefix = prefixOf(locked);
		const n = locked.nextParticipantNumber;
		const code = formatCode(prefix, n);
		await locked.update({ nextParticipantNumber: n + 1 }, { transaction });
		const p = await Participant.create(researchRowOf(study.id, code, input), { transaction });
		await ParticipantPersonal.create(personalRowOf(p.id, input), { transaction });
		await audit(a, ctx, study, p, 'participant.created', { code, personalFields: personalFieldsOf(input) }, transaction);
		return { id: p.id, code };
	});
}

/** Every measured length, by segment, newest first; `latest` marks the one scaling uses. */
async function lengthHistory(participantId: string): Promise<LengthView[]> {
	const lengths = await ParticipantLength.findAll({
		where: { participantId },
		order: [
			['segment', 'ASC'],
			['measuredOn', 'DESC'],
			['createdAt', 'DESC']
		]
	});
	const seen = new Set<string>();
	return lengths.map((l) => {
		const latest = !seen.has(l.segment);
		seen.add(l.segment);
		return { id: l.id, segment: l.segment, lengthM: l.lengthM, measuredOn: l.measuredOn, latest };
	});
}

/** One participant of the study in the URL (another study's participant, or a malformed id, is not-found, as an unknown one). */
export async function participantIn(studyId: string, rawPid: string, transaction?: Transaction): Promise<Participant> {
	const p = isUuid(rawPid) ? await Participant.findOne({ where: { id: rawPid.toLowerCase(), studyId }, transaction }) : null;
	if (!p) throw notFound();
	return p;
}

/** Guards the action on the study and finds the participant in it (for a participant's pages and forms). */
export async function participantFor(actor: Actor | null, ctx: RequestContext, action: StudyAction, rawId: string, rawPid: string) {
	const { actor: a, study } = await studyFor(actor, ctx, action, rawId);
	return { actor: a, study, participant: await participantIn(study.id, rawPid) };
}

/** The participant's page: research fields, length history and, for roles allowed, personal data (reading it is audited). */
export async function readParticipant(actor: Actor | null, ctx: RequestContext, rawId: string, rawPid: string) {
	const { actor: a, study, participant: p } = await participantFor(actor, ctx, 'study.read', rawId, rawPid);
	const seesPersonal = may(a, 'participant.personal.read', study.id);
	const history = await lengthHistory(p.id);
	let personal: Personal | undefined;
	if (seesPersonal) {
		personal = personalOf(await ParticipantPersonal.findByPk(p.id));
		// reading personal data is itself worth a trace
		await audit(a, ctx, study, p, 'participant.personal.viewed');
	}
	return {
		study: { id: study.id, code: study.code, title: study.title },
		participant: { ...researchOf(p), dominantSide: p.dominantSide, notes: p.notes, createdAt: p.createdAt.toISOString() },
		lengths: history,
		segments: LENGTH_KEYS as readonly string[],
		seesPersonal,
		personal,
		mayEdit: may(a, 'participant.edit', study.id),
		mayEditPersonal: may(a, 'participant.personal.edit', study.id)
	};
}

const lengthSchema = z.object({
	segment: z.enum(LENGTH_KEYS, { error: 'Choose a segment from the list.' }),
	lengthM: z
		.string()
		.trim()
		.min(1, 'Enter the length in m.')
		.transform(Number)
		.refine((v) => Number.isFinite(v) && v > 0.02 && v <= 1.2, 'Enter a length in metres between 0.02 and 1.2 m (is it in cm?).'),
	measuredOn: z
		.string()
		.trim()
		.refine((v) => /^\d{4}-\d{2}-\d{2}$/.test(v) && !Number.isNaN(Date.parse(v)), 'Enter the date of the measurement (YYYY-MM-DD).')
		.refine((v) => v <= new Date().toISOString().slice(0, 10), 'The measurement date cannot be in the future.')
});

/** Adds one measurement to the history (earlier ones stay). */
export const addLength = participantForm(
	'participant.edit',
	lengthSchema,
	['segment', 'lengthM', 'measuredOn'],
	async ({ p, data, transaction, audit }): Promise<void> => {
		const l = await ParticipantLength.create({ participantId: p.id, ...data }, { transaction });
		await audit('participant.length.added', { lengthId: l.id, segment: l.segment, lengthM: l.lengthM, measuredOn: l.measuredOn });
	}
);

/** What the segment-model page needs: the participant's research fields and latest measured lengths (no personal data). */
export async function segmentModelInput(actor: Actor | null, ctx: RequestContext, rawId: string, rawPid: string) {
	const { study, participant: p } = await participantFor(actor, ctx, 'study.read', rawId, rawPid);
	const measured: Record<string, number> = {};
	const measuredOn: Record<string, string> = {};
	for (const l of await lengthHistory(p.id)) {
		if (!l.latest) continue;
		measured[l.segment] = l.lengthM;
		measuredOn[l.segment] = l.measuredOn;
	}
	return {
		study: { id: study.id, code: study.code, title: study.title, defaultTable: study.defaultTable },
		participant: { id: p.id, code: p.code, sex: p.sex, bodyMassKg: p.bodyMassKg, statureM: p.statureM },
		measured,
		measuredOn
	};
}
