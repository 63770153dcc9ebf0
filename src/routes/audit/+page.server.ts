// The audit log for administrators: filters from the query string, 50 events a page, newest first.
import { auditPage, filterQuery, parseAuditQuery } from '$lib/server/audit/log';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const query = parseAuditQuery(event.url.searchParams);
	const page = await auditPage(event, query);
	return { ...page, filter: query.filter, problems: query.problems, exportHref: `/audit/export.csv${filterQuery(query.filter)}` };
};
