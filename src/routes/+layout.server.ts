// Shell data for every page: the lab's name (the shell still renders when the database is down).
import { currentLab } from '$lib/server/lab';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async () => {
	try {
		return { lab: await currentLab() };
	} catch {
		return { lab: null };
	}
};
