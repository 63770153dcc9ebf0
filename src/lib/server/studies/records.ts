// A study's own records: ethics approval and default segment table (PI settings) and consent form versions.
import { z } from 'zod';
import { db } from '../db/index';
import { ConsentFormVersion, Study } from '../db/models';
import { studyFor, type Actor } from '../access/guard';
import type { RequestContext } from '../access/context';
import { record } from '../audit/record';
import { FormProblem } from '../errors';
import { renderMarkdown } from '../consent/markdown';

import { SEGMENT_TABLE_IDS, type SegmentTableId } from '../../anthropometry/tables';

// the segment tables a study may choose are the ones the anthropometry module publishes
export const TABLE_IDS = SEGMENT_TABLE_IDS as [SegmentTableId, ...SegmentTableId[]];
export type TableId = SegmentTableId;

/** Days before expiry from which the study page warns. */
export const ETHICS_WARNING_DAYS = 30;

export type EthicsState = 'none' | 'valid' | 'expiring' | 'expired';

/** Where an approval stands on `today` (ISO date strings compare as dates). */
export function ethicsState(expiresOn: string | null, today = new Date().toISOString().slice(0, 10)): { state: EthicsState; daysLeft: number | null } {
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
	ethicsReference: z.string().trim().max(200, 'Keep the ethics reference under 200 characters.').transform((v) => v || null),
	ethicsExpiresOn: z
		.string()
		.trim()
		.refine((v) => v === '' || (ISO_DATE.test(v) && !Number.isNaN(Date.parse(v))), 'Enter the expiry as a date (YYYY-MM-DD), or leave it empty.')
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
	const before = { ethicsReference: study.ethicsReference ?? null, ethicsExpiresOn: study.ethicsExpiresOn ?? null, defaultTable: study.defaultTable };
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

export interface ConsentVersionView {
	id: string;
	version: number;
	bodyMarkdown: string;
	bodyHtml: string;
	confirmations: string[];
	publishedAt: string;
}

export async function listConsentVersions(studyId: string): Promise<ConsentVersionView[]> {
	const rows = await ConsentFormVersion.findAll({ where: { studyId }, order: [['version', 'DESC']] });
	return rows.map((v) => ({
		id: v.id,
		version: v.version,
		bodyMarkdown: v.bodyMarkdown,
		bodyHtml: renderMarkdown(v.bodyMarkdown),
		confirmations: v.confirmations,
		publishedAt: v.publishedAt.toISOString()
	}));
}

const consentSchema = z.object({
	bodyMarkdown: z.string().trim().min(1, 'Write the text of the consent form.').max(50_000, 'Keep the consent form under 50,000 characters.'),
	confirmations: z
		.array(z.string().max(500, 'Keep each confirmation statement under 500 characters.'))
		.min(1, 'Give at least one confirmation statement, one per line.')
		.max(20, 'Give at most 20 confirmation statements.')
});

/** The consent form as posted: its Markdown text and the confirmation statements, one per line. */
export interface ConsentFormInput {
	bodyMarkdown?: unknown;
	confirmations?: unknown;
}

/** Publishes a new version (the next number); earlier versions are never touched. */
export async function publishConsentVersion(actor: Actor | null, ctx: RequestContext, rawStudyId: string, input: ConsentFormInput): Promise<number> {
	const { actor: a, study } = await studyFor(actor, ctx, 'consent.publish', rawStudyId);
	const r = consentSchema.safeParse({
		bodyMarkdown: text(input.bodyMarkdown),
		confirmations: text(input.confirmations)
			.split(/\r?\n/)
			.map((l) => l.trim())
			.filter(Boolean)
	});
	if (!r.success) throw new FormProblem(fieldErrors(r.error.issues));
	return db().transaction(async (transaction) => {
		// lock the study row so that two PIs publishing at once cannot take the same number
		await Study.findByPk(study.id, { transaction, lock: transaction.LOCK.UPDATE });
		const last = (await ConsentFormVersion.max<number, ConsentFormVersion>('version', { where: { studyId: study.id }, transaction })) ?? 0;
		const v = await ConsentFormVersion.create(
			{ studyId: study.id, version: last + 1, bodyMarkdown: r.data.bodyMarkdown, confirmations: r.data.confirmations, publishedBy: a.id },
			{ transaction }
		);
		await record(
			{
				action: 'consent_form.published',
				actorUserId: a.id,
				actorLabel: a.email,
				studyId: study.id,
				recordType: 'consent_form_version',
				recordId: v.id,
				ipAddress: ctx.ipAddress,
				details: { version: v.version }
			},
			transaction
		);
		return v.version;
	});
}
