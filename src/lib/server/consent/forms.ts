// Consent forms of a study: the published versions (never changed afterwards) and publishing the next one (PI).
import { z } from 'zod';
import { db } from '../db/index';
import { ConsentFormVersion, Study } from '../db/models';
import { studyFor, type Actor } from '../access/guard';
import type { RequestContext } from '../access/context';
import { record } from '../audit/record';
import { FormProblem } from '../errors';
import { fieldErrors } from '../studies/records';
import { renderMarkdown } from './markdown';
import type { ConsentVersionView } from '../../types/consent';

export type { ConsentVersionView };

const text = (v: unknown) => (typeof v === 'string' ? v : '');

/** Every published version of the study's consent form, newest first, with its text rendered. */
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
	bodyMarkdown: z
		.string()
		.trim()
		.min(1, 'Write the text of the consent form.')
		.max(50_000, 'Keep the consent form under 50,000 characters.'),
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
export async function publishConsentVersion(
	actor: Actor | null,
	ctx: RequestContext,
	rawStudyId: string,
	input: ConsentFormInput
): Promise<number> {
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
