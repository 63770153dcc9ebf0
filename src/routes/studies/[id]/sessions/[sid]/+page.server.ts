// The session page: set-up summary, its trials with their runs, and the upload area (posting to the trials API).
import { readSession } from '$lib/server/sessions';
import { decodeFlash, flashCookieName } from '$lib/server/upload-flash';
import { uploadLimitText } from '$lib/server/uploads';
import { latestMomentsBySession, listRunsForSession } from '$lib/server/runs';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const data = await readSession(event, event.params.id, event.params.sid);
	const path = `/studies/${data.study.id}/sessions/${data.session.id}`;
	// the outcome of a plain form upload, shown once
	const flash = decodeFlash(event.cookies.get(flashCookieName));
	if (flash) event.cookies.delete(flashCookieName, { path });
	return {
		...data,
		runs: await listRunsForSession(data.session.id),
		moments: await latestMomentsBySession(data.session.id),
		flash,
		limitText: uploadLimitText(),
		created: event.url.searchParams.get('created') === '1',
		saved: event.url.searchParams.get('saved') === '1'
	};
};
