// Column-mapping presets of a study: the team lists them, PI and technicians save new ones.
import { callerOf, edge, jsonEdge } from '$lib/server/http/edge';
import { json } from '@sveltejs/kit';
import { createPreset, listPresets, type PresetInput } from '$lib/server/trials/mapping-presets';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) =>
	edge(event, async () => json({ presets: await listPresets(...callerOf(event), event.params.id) }));

export const POST: RequestHandler = (event) =>
	jsonEdge(event, async () => {
		// JSON { name, mapping }, or a form with a name and the mapping as JSON text; read once access is checked
		const preset = async (): Promise<PresetInput> => {
			if ((event.request.headers.get('content-type') ?? '').includes('application/json'))
				return (await event.request.json()) as PresetInput;
			const form = await event.request.formData();
			const text = String(form.get('mapping') ?? '');
			return { name: form.get('name'), mapping: text ? JSON.parse(text) : undefined };
		};
		return json({ preset: await createPreset(...callerOf(event), { studyId: event.params.id, preset }) }, { status: 201 });
	});
