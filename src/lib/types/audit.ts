// What the audit log page receives from the server, and its filter's query string: one definition for both sides
// (no server imports here).

export const OUTCOMES = ['ok', 'denied', 'failed'] as const;
export type Outcome = (typeof OUTCOMES)[number];

/** The filters as typed in the URL (kept as text so the form can show them back). */
export interface AuditFilter {
	/** Action prefix, e.g. "auth." or "access.denied". */
	action: string;
	outcome: Outcome | '';
	/** Part of the actor's e-mail address (or label: "seed", "anonymous"). */
	actor: string;
	/** Study code, exact (case-insensitive). */
	study: string;
	/** UTC dates, YYYY-MM-DD, both inclusive. */
	from: string;
	to: string;
}

export interface AuditQuery {
	filter: AuditFilter;
	page: number;
	/** What was wrong with the query; the faulty parts are not applied. */
	problems: string[];
}

export interface AuditRow {
	id: string;
	/** ISO 8601 in UTC, for <time datetime>. */
	occurredAt: string;
	/** "2026-03-02 14:05:12 UTC" */
	when: string;
	actorLabel: string;
	actorName: string | null;
	action: string;
	outcome: Outcome;
	studyCode: string | null;
	/** "user 3f2c…" when the event names a record. */
	record: string | null;
	ipAddress: string | null;
	summary: string;
	/** The full details as indented JSON, for the disclosure under the summary. */
	detailsJson: string;
}

export interface AuditPage {
	rows: AuditRow[];
	total: number;
	page: number;
	pageCount: number;
	pageSize: number;
	/** For the filter form: every study code, and the actions seen so far (for suggestions). */
	studies: { code: string; title: string }[];
	actions: string[];
}

/** The query string for these filters (empty fields left out), for paging links and the export. */
export function filterQuery(filter: AuditFilter, page?: number): string {
	const p = new URLSearchParams();
	for (const [k, v] of Object.entries(filter)) if (v) p.set(k, v);
	if (page && page > 1) p.set('page', String(page));
	const s = p.toString();
	return s ? `?${s}` : '';
}
