// Reading the audit log (administrators only): URL filters, pages of 50 newest first, CSV export. Writing is record.ts.
import { Op, type WhereOptions } from 'sequelize';
import { AuditEvent, Study, User } from '../db/models';
import { guardLab, type Actor } from '../access/guard';
import type { RequestContext } from '../access/context';
import { OUTCOMES, type AuditFilter, type AuditPage, type AuditQuery, type AuditRow, type Outcome } from '../../types/audit';
import { record } from './record';

export { OUTCOMES, filterQuery, type AuditFilter, type AuditPage, type AuditQuery, type AuditRow, type Outcome } from '../../types/audit';

export const PAGE_SIZE = 50;

const DATE = /^(\d{4})-(\d{2})-(\d{2})$/;

function utcDay(s: string): Date | null {
	const m = DATE.exec(s);
	if (!m) return null;
	const d = new Date(Date.UTC(Number(m[1]), Number(m[2]) - 1, Number(m[3])));
	// reject dates that roll over (2026-02-31)
	return d.toISOString().slice(0, 10) === s ? d : null;
}

/** Reads the filters and the page number from a query string; never throws. */
export function parseAuditQuery(params: URLSearchParams): AuditQuery {
	const text = (name: string, max = 200) => (params.get(name) ?? '').trim().slice(0, max);
	const problems: string[] = [];
	const outcomeRaw = text('outcome');
	const outcome = (OUTCOMES as readonly string[]).includes(outcomeRaw) ? (outcomeRaw as Outcome) : '';
	if (outcomeRaw && !outcome) problems.push(`"${outcomeRaw}" is not an outcome; choose OK, Denied or Failed.`);
	let from = text('from');
	let to = text('to');
	if (from && !utcDay(from)) {
		problems.push(`"${from}" is not a date; use the form YYYY-MM-DD.`);
		from = '';
	}
	if (to && !utcDay(to)) {
		problems.push(`"${to}" is not a date; use the form YYYY-MM-DD.`);
		to = '';
	}
	if (from && to && from > to) {
		problems.push(`The "from" date (${from}) is after the "to" date (${to}); the dates were not applied.`);
		from = to = '';
	}
	const page = Math.max(1, Math.min(1_000_000, Math.floor(Number(params.get('page') ?? '1')) || 1));
	return { filter: { action: text('action'), outcome, actor: text('actor'), study: text('study'), from, to }, page, problems };
}

const escapeLike = (s: string) => s.replace(/[\\%_]/g, (c) => `\\${c}`);

/** The WHERE clause for a filter, or null when it cannot match anything (an unknown study code). */
async function whereFor(filter: AuditFilter): Promise<WhereOptions<AuditEvent> | null> {
	const and: WhereOptions<AuditEvent>[] = [];
	if (filter.action) and.push({ action: { [Op.like]: `${escapeLike(filter.action)}%` } });
	if (filter.outcome) and.push({ outcome: filter.outcome });
	if (filter.actor) and.push({ actorLabel: { [Op.iLike]: `%${escapeLike(filter.actor)}%` } });
	if (filter.study) {
		const study = await Study.findOne({ where: { code: { [Op.iLike]: escapeLike(filter.study) } }, attributes: ['id'] });
		if (!study) return null;
		and.push({ studyId: study.id });
	}
	const from = filter.from ? utcDay(filter.from) : null;
	const to = filter.to ? utcDay(filter.to) : null;
	if (from) and.push({ occurredAt: { [Op.gte]: from } });
	if (to) and.push({ occurredAt: { [Op.lt]: new Date(to.getTime() + 86_400_000) } });
	return and.length ? { [Op.and]: and } : {};
}

export const formatUtc = (d: Date) => `${d.toISOString().slice(0, 19).replace('T', ' ')} UTC`;

/** A one-line reading of an event's details: "attempted: study.read · path: /studies/… · answered: 404". */
export function summariseDetails(details: Record<string, unknown>, max = 160): string {
	const value = (v: unknown): string => {
		if (v === null || v === undefined) return '—';
		if (typeof v === 'string') return v.length > 60 ? `${v.slice(0, 59)}…` : v;
		if (typeof v === 'number' || typeof v === 'boolean') return String(v);
		if (Array.isArray(v)) return v.length <= 3 && v.every((x) => typeof x !== 'object') ? v.map(value).join(', ') : `${v.length} items`;
		return '{…}';
	};
	const s = Object.entries(details ?? {})
		.map(([k, v]) => `${k}: ${value(v)}`)
		.join(' · ');
	return s.length > max ? `${s.slice(0, max - 1)}…` : s;
}

async function studyCodes(): Promise<Map<string, string>> {
	const studies = await Study.findAll({ attributes: ['id', 'code'] });
	return new Map(studies.map((s) => [s.id, s.code]));
}

function toRow(e: AuditEvent, codes: Map<string, string>, names: Map<string, string | null>): AuditRow {
	return {
		id: String(e.id),
		occurredAt: e.occurredAt.toISOString(),
		when: formatUtc(e.occurredAt),
		actorLabel: e.actorLabel,
		actorName: e.actorUserId ? (names.get(e.actorUserId) ?? null) : null,
		action: e.action,
		outcome: e.outcome,
		studyCode: e.studyId ? (codes.get(e.studyId) ?? e.studyId) : null,
		record: e.recordType || e.recordId ? [e.recordType, e.recordId].filter(Boolean).join(' ') : null,
		ipAddress: e.ipAddress,
		summary: summariseDetails(e.details),
		detailsJson: JSON.stringify(e.details ?? {}, null, 2)
	};
}

const NEWEST_FIRST: [string, string][] = [
	['occurredAt', 'DESC'],
	['id', 'DESC']
];

/** One page of the filtered log, newest first. */
export async function auditPage(actor: Actor | null, ctx: RequestContext, query: AuditQuery): Promise<AuditPage> {
	await guardLab(actor, ctx, 'audit.read');
	const [where, codes, studies, actions] = await Promise.all([
		whereFor(query.filter),
		studyCodes(),
		Study.findAll({ attributes: ['code', 'title'], order: [['code', 'ASC']] }),
		AuditEvent.findAll({ attributes: ['action'], group: ['action'], order: [['action', 'ASC']], limit: 300 })
	]);
	const found = where
		? await AuditEvent.findAndCountAll({ where, order: NEWEST_FIRST, limit: PAGE_SIZE, offset: (query.page - 1) * PAGE_SIZE })
		: { rows: [] as AuditEvent[], count: 0 };
	const userIds = [...new Set(found.rows.map((r) => r.actorUserId).filter((x): x is string => Boolean(x)))];
	// actor_user_id is free text in the log; only well-formed ids are looked up
	const lookups = userIds.filter((id) => /^[0-9a-f-]{36}$/i.test(id));
	const users = lookups.length ? await User.findAll({ where: { id: lookups }, attributes: ['id', 'name'] }) : [];
	const names = new Map(users.map((u) => [u.id, u.name]));
	return {
		rows: found.rows.map((e) => toRow(e, codes, names)),
		total: found.count,
		page: query.page,
		pageCount: Math.max(1, Math.ceil(found.count / PAGE_SIZE)),
		pageSize: PAGE_SIZE,
		studies: studies.map((s) => ({ code: s.code, title: s.title })),
		actions: actions.map((a) => a.action)
	};
}

export const CSV_COLUMNS = [
	'occurred_at_utc',
	'actor',
	'actor_user_id',
	'action',
	'outcome',
	'study_code',
	'study_id',
	'record_type',
	'record_id',
	'ip_address',
	'details'
] as const;

/**
 * One CSV field (RFC 4180 quoting). Text that a spreadsheet would run as a formula (=, +, -, @, tab, CR first) gets a
 * leading apostrophe: the log holds what strangers typed into the sign-in form (OWASP, "CSV Injection").
 */
export function csvField(value: string | null | undefined): string {
	let s = value ?? '';
	if (/^[=+\-@\t\r]/.test(s)) s = `'${s}`;
	return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

const csvLine = (fields: (string | null | undefined)[]) => fields.map(csvField).join(',') + '\r\n';

const EXPORT_BATCH = 1000;

/**
 * The filtered log as CSV, newest first, streamed in batches. The export is itself audited. Rows added while it
 * streams are left out (ids above the highest one at the start), so batches neither repeat nor skip rows.
 */
export async function auditCsv(who: Actor | null, ctx: RequestContext, query: AuditQuery): Promise<ReadableStream<Uint8Array>> {
	const actor = await guardLab(who, ctx, 'audit.read');
	const where = await whereFor(query.filter);
	const codes = await studyCodes();
	const maxId = (await AuditEvent.max('id')) as string | number | null;
	await record({
		action: 'audit.exported',
		actorUserId: actor.id,
		actorLabel: actor.email,
		ipAddress: ctx.ipAddress,
		details: { filter: Object.fromEntries(Object.entries(query.filter).filter(([, v]) => v)), format: 'csv' }
	});
	const encoder = new TextEncoder();
	let offset = 0;
	let done = !where || maxId === null;
	let headerSent = false;
	return new ReadableStream<Uint8Array>({
		async pull(controller) {
			if (!headerSent) {
				headerSent = true;
				controller.enqueue(encoder.encode(csvLine([...CSV_COLUMNS])));
				if (done) controller.close();
				return;
			}
			const batch = await AuditEvent.findAll({
				where: { [Op.and]: [where!, { id: { [Op.lte]: maxId! } }] },
				order: NEWEST_FIRST,
				limit: EXPORT_BATCH,
				offset
			});
			offset += batch.length;
			if (batch.length) {
				const text = batch
					.map((e) =>
						csvLine([
							e.occurredAt.toISOString(),
							e.actorLabel,
							e.actorUserId,
							e.action,
							e.outcome,
							e.studyId ? (codes.get(e.studyId) ?? '') : '',
							e.studyId,
							e.recordType,
							e.recordId,
							e.ipAddress,
							JSON.stringify(e.details ?? {})
						])
					)
					.join('');
				controller.enqueue(encoder.encode(text));
			}
			if (batch.length < EXPORT_BATCH) {
				done = true;
				controller.close();
			}
		}
	});
}
