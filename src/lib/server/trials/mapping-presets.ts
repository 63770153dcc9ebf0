// Column-mapping presets of a study: a saved match of another system's columns to model DOFs, reused at upload.
import { FormProblem } from '../errors';
import { contextOf } from '../http/edge';
import type { RequestEvent } from '@sveltejs/kit';
import { UniqueConstraintError } from 'sequelize';
import { z } from 'zod';
import { db } from '../db/index';
import { MappingPreset } from '../db/models';
import { record } from '../audit/record';
import { guardStudy } from '../studies/records';
import { columnMappingSchema } from '../../processing/recording';
import type { PresetView } from '../sessions/sessions';

const view = (m: MappingPreset): PresetView => ({ id: m.id, name: m.name, mapping: m.mapping, createdAt: m.createdAt.toISOString() });

export async function listPresets(event: RequestEvent, rawId: string): Promise<PresetView[]> {
	const { study } = await guardStudy(event, 'study.read', rawId);
	return (await MappingPreset.findAll({ where: { studyId: study.id }, order: [['name', 'ASC']] })).map(view);
}

const nameSchema = z.string().trim().min(1, 'Give the preset a name.').max(100, 'Keep the preset name under 100 characters.');

/** Saves a preset from JSON `{ name, mapping }` or a form with fields `name` and `mapping` (JSON text). Audited. */
export async function createPreset(event: RequestEvent, rawId: string): Promise<PresetView> {
	const { actor, study } = await guardStudy(event, 'mapping.preset', rawId);
	let input: { name?: unknown; mapping?: unknown } = {};
	const type = event.request.headers.get('content-type') ?? '';
	try {
		if (type.includes('application/json')) input = (await event.request.json()) as typeof input;
		else {
			const form = await event.request.formData();
			const text = String(form.get('mapping') ?? '');
			input = { name: form.get('name'), mapping: text ? JSON.parse(text) : undefined };
		}
	} catch {
		throw new FormProblem({ mapping: 'Send the preset as JSON {"name", "mapping"} or as a form with a name and the mapping as JSON text.' });
	}
	const errors: Record<string, string> = {};
	const n = nameSchema.safeParse(typeof input.name === 'string' ? input.name : '');
	if (!n.success) errors.name = n.error.issues[0].message;
	const m = columnMappingSchema.safeParse(input.mapping);
	if (!m.success) {
		const i = m.error.issues[0];
		errors.mapping = input.mapping === undefined ? 'Send the column mapping to save.' : `The mapping is not usable: ${i.path.join('.') || 'mapping'}: ${i.message}`;
	}
	if (!n.success || !m.success) throw new FormProblem(errors);
	try {
		return await db().transaction(async (transaction) => {
			const p = await MappingPreset.create({ studyId: study.id, name: n.data, mapping: m.data as unknown as Record<string, unknown>, createdBy: actor.id }, { transaction });
			await record(
				{ action: 'mapping_preset.created', actorUserId: actor.id, actorLabel: actor.email, studyId: study.id, recordType: 'mapping_preset', recordId: p.id, ipAddress: contextOf(event).ipAddress, details: { name: p.name } },
				transaction
			);
			return view(p);
		});
	} catch (err) {
		if (err instanceof UniqueConstraintError) throw new FormProblem({ name: `The study already has a preset named “${n.data}”; choose another name.` }, 'conflict');
		throw err;
	}
}
