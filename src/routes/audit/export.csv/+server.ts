// GET /audit/export.csv: the audit events matching the page's filters, as CSV with a header row (administrators only).
import { auditCsv, parseAuditQuery } from '$lib/server/audit/log';
import { callerOf, edge } from '$lib/server/http/edge';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => {
	const body = await edge(event, () => auditCsv(...callerOf(event), parseAuditQuery(event.url.searchParams)));
	const stamp = new Date().toISOString().slice(0, 16).replace(/[-:]/g, '').replace('T', '-');
	return new Response(body, {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="momentry-audit-${stamp}.csv"`,
			'cache-control': 'no-store'
		}
	});
};
