// Column-mapping presets of a study: the team lists them, PI and technicians save new ones.
import { FormProblem } from '$lib/server/errors';
import { statusOf } from '$lib/server/http/edge';
import { json } from '@sveltejs/kit';
import { createPreset, listPresets } from '$lib/server/trials/mapping-presets';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async (event) => json({ presets: await listPresets(event, event.params.id) });

export const POST: RequestHandler = async (event) => {
	try {
		return json({ preset: await createPreset(event, event.params.id) }, { status: 201 });
	} catch (err) {
		if (err instanceof FormProblem) return json({ message: err.message, errors: err.errors }, { status: statusOf(err) });
		throw err;
	}
};
