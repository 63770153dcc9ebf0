// The printable report of a session (any state; marked as a draft unless approved).
import { callerOf, edge } from '$lib/server/http/edge';
import { sessionReport } from '$lib/server/sessions/report';
import { includeEdgeZonesOf } from '$lib/server/runs/runs';
import type { PageServerLoad } from './$types';

// peaks leave the edge zones out unless ?includeEdgeZones=1
export const load: PageServerLoad = (event) =>
	edge(event, () =>
		sessionReport(...callerOf(event), {
			studyId: event.params.id,
			sessionId: event.params.sid,
			includeEdgeZones: includeEdgeZonesOf(event.url.searchParams)
		})
	);
