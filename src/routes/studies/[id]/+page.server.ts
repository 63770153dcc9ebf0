// One study: code, title, ethics approval and team, for its members only (others, administrators included, get 404).
import { readStudy } from '$lib/server/studies/studies';
import { ethicsState } from '$lib/server/studies/records';
import { callerOf, edge } from '$lib/server/http/edge';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = (event) =>
	edge(event, async () => {
		const study = await readStudy(...callerOf(event), event.params.id);
		return { study, ethics: ethicsState(study.ethicsExpiresOn) };
	});
