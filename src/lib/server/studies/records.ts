// A study's own records: ethics approval and default segment table (PI settings); consent form versions are in consent/forms.ts.
import { z } from 'zod';
import { db } from '../db/index';
import { studyFor, type Actor } from '../access/guard';
import type { RequestContext } from '../access/context';
import { record } from '../audit/record';
import { FormProblem } from '../errors';
import type { EthicsState } from '../../types/studies';

import { SEGMENT_TABLE_IDS, type SegmentTableId } from '../../anthropometry/tables';

// the segment tables a study may choose are the ones the anthropometry module publishes
export const TABLE_IDS = SEGMENT_TABLE_IDS as [SegmentTableId, ...SegmentTableId[]];
export type TableId = SegmentTableId;

/** Days before expiry from which the study page warns. */
export const ETHICS_WARNING_DAYS = 30;

export type { EthicsState } from '../../types/studies';

/** Where an approval stands on `today` (ISO date strings compare as dates). */
export function ethicsState(
	expiresOn: string | null,
	today = new Date().toISOString().slice(0, 10)
): { state: EthicsState; daysLeft: number | null } {
	if (!expiresOn) return { state: 'none', daysLeft: null };
	const daysLeft = Math.round((Date.parse(expiresOn) - Date.parse(today)) / 86_400_000);
	if (daysLeft < 0) return { state: 'expired', daysLeft };
	return { state: daysLeft <= ETHICS_WARNING_DAYS ? 'expiring' : 'valid', daysLeft };
}

/** Field messages from a zod error, first message per field. */
export function fieldErrors(issues: z.core.$ZodIssue[]): Record<string, string> {
	const out: Record<string, string> = {};
	for (const i of issues) {
		const k = String(i.path[0] ?? 'form');
		out[k] ??= i.message;
	}
	return out;
}

const ISO_DATE = /^\d{4}-\d{2}-\d{2}$/;
const settingsSchema = z.object({
	ethicsReference: z
		.string()
		.trim()
		.max(200, 'Keep the ethics reference under 200 characters.')
		.transform((v) => v || null),
	ethicsExpiresOn: z
		.string()
		.trim()
		.refine(
			(v) => v === '' || (ISO_DATE.test(v) && !Number.isNaN(Date.parse(v))),
			'Enter the expiry as a date (YYYY-MM-DD), or leave it empty.'
		)
		.transform((v) => v || null),
	defaultTable: z.enum(TABLE_IDS, { error: 'Choose one of the listed segment tables.' })
});

export interface StudySettings {
	ethicsReference: string | null;
	ethicsExpiresOn: string | null;
	defaultTable: TableId;
}

/** The settings form as posted (strings; anything missing reads as empty). */
export type SettingsInput = Partial<Record<keyof StudySettings, unknown>>;

const text = (v: unknown) => (typeof v === 'string' ? v : '');

export function parseSettings(input: SettingsInput): StudySettings {
	const r = settingsSchema.safeParse({
		ethicsReference: text(input.ethicsReference),
		ethicsExpiresOn: text(input.ethicsExpiresOn),
		defaultTable: text(input.defaultTable)
	});
	if (!r.success) throw new FormProblem(fieldErrors(r.error.issues));
	return r.data;
}

/** The study's settings as the PI's form shows them. */
export async function settingsOf(actor: Actor | null, ctx: RequestContext, rawStudyId: string) {
	const { study } = await studyFor(actor, ctx, 'study.edit', rawStudyId);
	return {
		study: { id: study.id, code: study.code, title: study.title },
		values: { ethicsReference: study.ethicsReference ?? '', ethicsExpiresOn: study.ethicsExpiresOn ?? '', defaultTable: study.defaultTable }
	};
}

/** The PI changes the ethics approval and default table; the change and its old values are audited. */
export async function saveSettings(actor: Actor | null, ctx: RequestContext, rawStudyId: string, input: SettingsInput): Promise<void> {
	const { actor: a, study } = await studyFor(actor, ctx, 'study.edit', rawStudyId);
	const next = parseSettings(input);
	const before = {
		ethicsReference: study.ethicsReference ?? null,
		ethicsExpiresOn: study.ethicsExpiresOn ?? null,
		defaultTable: study.defaultTable
	};
	await db().transaction(async (transaction) => {
		await study.update(next, { transaction });
		await record(
			{
				action: 'study.settings.changed',
				actorUserId: a.id,
				actorLabel: a.email,
				studyId: study.id,
				recordType: 'study',
				recordId: study.id,
				ipAddress: ctx.ipAddress,
				details: { before, after: next }
			},
			transaction
		);
	});
}
