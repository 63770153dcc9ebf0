// The audit log for administrators: filters from the query string, 50 events a page, newest first.
import { auditPage, filterQuery, parseAuditQuery } from '$lib/server/audit/log';
import { callerOf, edge } from '$lib/server/http/edge';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = (event) =>
	edge(event, async () => {
		const query = parseAuditQuery(event.url.searchParams);
		const page = await auditPage(...callerOf(event), query);
		return { ...page, filter: query.filter, problems: query.problems, exportHref: `/audit/export.csv${filterQuery(query.filter)}` };
	});
