// One study: code, title, ethics approval and team, for its members only (others, administrators included, get 404).
import { readStudy } from '$lib/server/studies/studies';
import { ethicsState } from '$lib/server/studies/records';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const study = await readStudy(event, event.params.id);
	return { study, ethics: ethicsState(study.ethicsExpiresOn) };
};
