// Column-mapping presets of a study: a saved match of another system's columns to model DOFs, reused at upload.
import { FormProblem } from '../errors';
import { UniqueConstraintError } from 'sequelize';
import { z } from 'zod';
import { db } from '../db/index';
import { MappingPreset } from '../db/models';
import { studyFor, type Actor } from '../access/guard';
import type { RequestContext } from '../access/context';
import { record } from '../audit/record';
import { columnMappingSchema } from '../../processing/recording';
import { presetView as view } from '../sessions/sessions';
import type { PresetView } from '../../types/sessions';

export async function listPresets(actor: Actor | null, ctx: RequestContext, studyId: string): Promise<PresetView[]> {
	const { study } = await studyFor(actor, ctx, 'study.read', studyId);
	return (await MappingPreset.findAll({ where: { studyId: study.id }, order: [['name', 'ASC']] })).map(view);
}

const nameSchema = z.string().trim().min(1, 'Give the preset a name.').max(100, 'Keep the preset name under 100 characters.');

/** A preset as it was sent: its name and its mapping (parsed JSON), each still to be checked. */
export interface PresetInput {
	name?: unknown;
	mapping?: unknown;
}

/** How a preset that could not be read as JSON or a form is refused. */
export const presetBodyProblem = () =>
	new FormProblem({ mapping: 'Send the preset as JSON {"name", "mapping"} or as a form with a name and the mapping as JSON text.' });

/** Saves a preset `{ name, mapping }` (the route reads it from JSON or from a form's `name` and `mapping` JSON text). Audited. */
export async function createPreset(
	actor: Actor | null,
	ctx: RequestContext,
	input: { studyId: string; preset: () => Promise<PresetInput> }
): Promise<PresetView> {
	const { actor: a, study } = await studyFor(actor, ctx, 'mapping.preset', input.studyId);
	let sent: PresetInput;
	try {
		sent = await input.preset();
	} catch {
		throw presetBodyProblem();
	}
	const errors: Record<string, string> = {};
	const n = nameSchema.safeParse(typeof sent.name === 'string' ? sent.name : '');
	if (!n.success) errors.name = n.error.issues[0].message;
	const m = columnMappingSchema.safeParse(sent.mapping);
	if (!m.success) {
		const i = m.error.issues[0];
		errors.mapping =
			sent.mapping === undefined
				? 'Send the column mapping to save.'
				: `The mapping is not usable: ${i.path.join('.') || 'mapping'}: ${i.message}`;
	}
	if (!n.success || !m.success) throw new FormProblem(errors);
	try {
		return await db().transaction(async (transaction) => {
			const p = await MappingPreset.create({ studyId: study.id, name: n.data, mapping: m.data, createdBy: a.id }, { transaction });
			await recordPreset(a, ctx, study.id, p, transaction);
			return view(p);
		});
	} catch (err) {
		if (err instanceof UniqueConstraintError)
			throw new FormProblem({ name: `The study already has a preset named “${n.data}”; choose another name.` }, 'conflict');
		throw err;
	}
}

/** The audit entry of a saved preset (here and when an upload saves its mapping as one). */
export function recordPreset(
	actor: Actor,
	ctx: RequestContext,
	studyId: string,
	p: MappingPreset,
	transaction: Parameters<typeof record>[1]
) {
	return record(
		{
			action: 'mapping_preset.created',
			actorUserId: actor.id,
			actorLabel: actor.email,
			studyId,
			recordType: 'mapping_preset',
			recordId: p.id,
			ipAddress: ctx.ipAddress,
			details: { name: p.name }
		},
		transaction
	);
}
