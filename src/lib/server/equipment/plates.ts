// The lab's force plates: every signed-in person reads them (studies use them); lab administrators set them up,
// change and archive them (equipment.manage). A plate is checked with the one plate schema of the processing code
// (src/lib/processing/forces/plate.ts) and every problem comes back under the field it is about; nothing is stored
// for a refused plate. Every change is audited with the plate before and after.
import { UniqueConstraintError, type Transaction } from 'sequelize';
import { db } from '../db/index';
import { ForcePlate as PlateRecord, Lab } from '../db/models';
import { guardLab, isUuid, may, requireActor, type Actor } from '../access/guard';
import type { RequestContext } from '../access/context';
import { record } from '../audit/record';
import { conflict, FormProblem, notFound, type FieldErrors } from '../errors';
import { forcePlateSchema, plateCentre, type ForcePlate } from '../../processing/forces/plate';
import { AXIS_LETTERS, orientationOf, type PlateList, type PlateView } from '../../types/equipment';

/** A plate as sent by a form or a script: the ForcePlate's fields, checked here (anything else is ignored). */
export type PlateInput = Partial<Record<keyof ForcePlate, unknown>>;

/** The answer for a plate id that is malformed or unknown. */
export const NO_SUCH_PLATE = 'There is no such force plate in this lab. Choose one from the list of plates.';

/** What a field is called in messages: `corners.0.x` → "Corner 1 X", `axes.1.2` → "Axes row 2, column 3". */
function fieldLabel(key: string): string {
	const [head, a, b] = key.split('.');
	if (head === 'name') return 'Name';
	if (head === 'originDepthM') return 'Origin depth';
	if (head === 'output') return 'Output';
	if (head === 'corners' && a !== undefined && b !== undefined) return `Corner ${Number(a) + 1} ${b.toUpperCase()}`;
	if (head === 'corners' && a !== undefined) return `Corner ${Number(a) + 1}`;
	if (head === 'axes' && a !== undefined && b !== undefined) return `Axes row ${Number(a) + 1}, column ${Number(b) + 1}`;
	if (head === 'axes' && a !== undefined) return `Axes row ${Number(a) + 1}`;
	return '';
}

/** A schema message as a sentence about its field ("Name must …", "The corners are not a rectangle: …"). */
function sentence(key: string, message: string): string {
	const label = fieldLabel(key);
	if (label && message.startsWith('must')) return `${label} ${message}.`;
	const text = message.charAt(0).toUpperCase() + message.slice(1);
	return /[.!?]$/.test(text) ? text : `${text}.`;
}

/** The field key of a schema issue: `name`, `corners`, `corners.<0–3>.<x|y|z>`, `axes`, `axes.<row>.<column>`, `originDepthM`, `output`. */
function fieldKey(path: readonly PropertyKey[]): string {
	const [head, a, b] = path;
	if (head === 'corners' && typeof a === 'number' && typeof b === 'number') return `corners.${a}.${AXIS_LETTERS[b] ?? b}`;
	return path.map(String).join('.') || 'form';
}

/**
 * Checks a plate with the plate schema; every problem is reported under its field (several about one field are
 * joined), so a form can show each beside its input.
 */
export function validatePlate(input: PlateInput): ForcePlate {
	const candidate = {
		name: typeof input.name === 'string' ? input.name.trim() : input.name,
		corners: input.corners,
		axes: input.axes,
		originDepthM: input.originDepthM,
		output: input.output
	};
	const r = forcePlateSchema.safeParse(candidate);
	if (r.success) return r.data;
	const errors: FieldErrors = {};
	for (const issue of r.error.issues) {
		const key = fieldKey(issue.path);
		const text = sentence(key, issue.message);
		errors[key] = errors[key] ? `${errors[key]} ${text}` : text;
	}
	throw new FormProblem(errors);
}

const iso = (d: Date) => d.toISOString();

/** The answer for one stored plate. */
export function plateView(row: PlateRecord): PlateView {
	const plate = row.plate;
	return {
		id: row.id,
		...plate,
		createdAt: iso(row.createdAt),
		updatedAt: iso(row.updatedAt),
		archivedAt: row.archivedAt ? iso(row.archivedAt) : null,
		orientation: orientationOf(plate.axes),
		centre: plateCentre(plate)
	};
}

/** The lab this installation serves (its first); plates belong to it. */
async function theLab(transaction?: Transaction): Promise<Lab> {
	const lab = await Lab.findOne({ order: [['id', 'ASC']], transaction });
	if (!lab) throw conflict('The lab is not set up yet: load the lab record (npm run db:seed) before adding force plates.');
	return lab;
}

/**
 * The lab's plates in use, by name, without an access check: for other domains (trials, runs, the worker) that
 * have checked access themselves. Each `plate` is the pure ForcePlate the processing code takes.
 */
export async function platesInUse(transaction?: Transaction): Promise<PlateView[]> {
	const lab = await theLab(transaction);
	const rows = await PlateRecord.findAll({ where: { labId: lab.id, archivedAt: null }, order: [['name', 'ASC']], transaction });
	return rows.map(plateView);
}

/** Every plate of the lab, in use (by name) and archived (newest first): any signed-in person may read them (reads are not audited). */
export async function listPlates(actor: Actor | null, _ctx: RequestContext): Promise<PlateList> {
	const a = requireActor(actor);
	const lab = await theLab();
	const rows = await PlateRecord.findAll({ where: { labId: lab.id }, order: [['name', 'ASC']] });
	const views = rows.map(plateView);
	return {
		plates: views.filter((p) => !p.archivedAt),
		archived: views.filter((p) => p.archivedAt).sort((x, y) => (y.archivedAt ?? '').localeCompare(x.archivedAt ?? '')),
		canManage: may(a, 'equipment.manage')
	};
}

/** One plate of the lab (in use or archived); not-found for a malformed or unknown id. */
export async function getPlate(actor: Actor | null, _ctx: RequestContext, rawId: string): Promise<PlateView> {
	requireActor(actor);
	const lab = await theLab();
	const row = isUuid(rawId) ? await PlateRecord.findOne({ where: { id: rawId.toLowerCase(), labId: lab.id } }) : null;
	if (!row) throw notFound(NO_SUCH_PLATE);
	return plateView(row);
}

const nameTaken = (name: string) =>
	new FormProblem(
		{
			name: `A plate named “${name}” is already in use in this lab. Choose another name: it is the column prefix of the plate's channels in recordings.`
		},
		'conflict'
	);

async function assertNameFree(labId: number, name: string, exceptId: string | null, transaction: Transaction): Promise<void> {
	const other = await PlateRecord.findOne({ where: { labId, name, archivedAt: null }, transaction });
	if (other && other.id !== exceptId) throw nameTaken(name);
}

/** Runs a change; a name another plate took in the meantime (the unique index) is the same message as one found first. */
async function saving<T>(name: string, work: () => Promise<T>): Promise<T> {
	try {
		return await work();
	} catch (err) {
		if (err instanceof UniqueConstraintError) throw nameTaken(name);
		throw err;
	}
}

async function lockedPlate(rawId: string, labId: number, transaction: Transaction): Promise<PlateRecord> {
	const row = isUuid(rawId)
		? await PlateRecord.findOne({ where: { id: rawId.toLowerCase(), labId }, transaction, lock: transaction.LOCK.UPDATE })
		: null;
	if (!row) throw notFound(NO_SUCH_PLATE);
	return row;
}

const auditOf = (a: Actor, ctx: RequestContext, action: string, id: string, details: Record<string, unknown>) => ({
	action,
	actorUserId: a.id,
	actorLabel: a.email,
	recordType: 'force-plate',
	recordId: id,
	ipAddress: ctx.ipAddress,
	details
});

/** A lab administrator sets up a plate; audited as force-plate.created with the plate. */
export async function createPlate(actor: Actor | null, ctx: RequestContext, input: PlateInput): Promise<PlateView> {
	const a = await guardLab(actor, ctx, 'equipment.manage');
	const plate = validatePlate(input);
	return saving(plate.name, () =>
		db().transaction(async (transaction) => {
			const lab = await theLab(transaction);
			await assertNameFree(lab.id, plate.name, null, transaction);
			const row = await PlateRecord.create({ labId: lab.id, ...plate }, { transaction });
			await record(auditOf(a, ctx, 'force-plate.created', row.id, { plate }), transaction);
			return plateView(row);
		})
	);
}

/**
 * A lab administrator changes a plate in use (an archived one cannot be changed: conflict); audited as
 * force-plate.changed with the plate before and after, unless nothing changed.
 */
export async function updatePlate(actor: Actor | null, ctx: RequestContext, rawId: string, input: PlateInput): Promise<PlateView> {
	const a = await guardLab(actor, ctx, 'equipment.manage');
	return db().transaction(async (transaction) => {
		const lab = await theLab(transaction);
		const row = await lockedPlate(rawId, lab.id, transaction);
		if (row.archivedAt) throw conflict(`Plate “${row.name}” is archived and can no longer be changed. Set up a new plate instead.`);
		const plate = validatePlate(input);
		const before = row.plate;
		if (JSON.stringify(before) === JSON.stringify(plate)) return plateView(row);
		await assertNameFree(lab.id, plate.name, row.id, transaction);
		await saving(plate.name, () => row.update({ ...plate, updatedAt: new Date() }, { transaction }));
		await record(auditOf(a, ctx, 'force-plate.changed', row.id, { before, after: plate }), transaction);
		return plateView(row);
	});
}

/**
 * A lab administrator takes a plate out of use: it is archived, never deleted (runs that used it keep pointing at it),
 * and its name is free for a new plate. Audited as force-plate.archived; archiving an archived plate is a conflict.
 */
export async function archivePlate(actor: Actor | null, ctx: RequestContext, rawId: string): Promise<PlateView> {
	const a = await guardLab(actor, ctx, 'equipment.manage');
	return db().transaction(async (transaction) => {
		const lab = await theLab(transaction);
		const row = await lockedPlate(rawId, lab.id, transaction);
		if (row.archivedAt) throw conflict(`Plate “${row.name}” is archived already.`);
		const now = new Date();
		await row.update({ archivedAt: now, updatedAt: now }, { transaction });
		await record(auditOf(a, ctx, 'force-plate.archived', row.id, { plate: row.plate }), transaction);
		return plateView(row);
	});
}
