// Addresses of a searchable, sortable, paged list (the people list, a study's participants): only what differs from
// the list's defaults goes into the address, so that addresses stay short and the plain list is just its path.

export interface ListQuery<S extends string = string> {
	q: string;
	sort: S;
	dir: 'asc' | 'desc';
	page: number;
}

/** `base` with the query's parts that differ from the defaults (no search, `defaultSort` ascending, page 1). */
export function listHref(base: string, query: ListQuery, defaultSort: string): string {
	const p = new URLSearchParams();
	if (query.q) p.set('q', query.q);
	if (query.sort !== defaultSort) p.set('sort', query.sort);
	if (query.dir !== 'asc') p.set('dir', query.dir);
	if (query.page > 1) p.set('page', String(query.page));
	const s = p.toString();
	return s ? `${base}?${s}` : base;
}

/** What a column heading's link changes: the column already sorted on turns round; another column starts ascending. */
export function sortChange<S extends string>(query: ListQuery<S>, sort: S): Pick<ListQuery<S>, 'sort' | 'dir' | 'page'> {
	return { sort, dir: query.sort === sort && query.dir === 'asc' ? 'desc' : 'asc', page: 1 };
}

/** The heading's aria-sort: only on the column the list is sorted on. */
export function ariaSort(query: ListQuery, sort: string): 'ascending' | 'descending' | undefined {
	return query.sort === sort ? (query.dir === 'asc' ? 'ascending' : 'descending') : undefined;
}
