// The lab's force plates: every signed-in person sees them (studies use them); lab administrators add, change and
// archive them (equipment.manage). ?edit=<id> fills the form with a plate, ?archive=<id> asks to confirm archiving.
import { redirect, type RequestEvent } from '@sveltejs/kit';
import { FormProblem } from '$lib/server/errors';
import { callerOf, edge, formEdge, formValues, requireLab } from '$lib/server/http/edge';
import { archivePlate, createPlate, getPlate, listPlates, updatePlate } from '$lib/server/equipment/plates';
import { newPlate, plateFormValues, plateFromForm } from '$lib/server/equipment/form';
import type { Actions, PageServerLoad } from './$types';

const HERE = '/lab/force-plates';
const DONE = ['created', 'changed', 'archived'] as const;

export const load: PageServerLoad = (event) =>
	edge(event, async () => {
		const caller = callerOf(event);
		const list = await listPlates(...caller);
		const find = async (param: string) => {
			const id = event.url.searchParams.get(param);
			return id && list.canManage ? await getPlate(...caller, id) : null;
		};
		const editing = await find('edit');
		const archiving = await find('archive');
		const done = event.url.searchParams.get('done');
		return {
			...list,
			editing: editing && !editing.archivedAt ? editing : null,
			archiving: archiving && !archiving.archivedAt ? archiving : null,
			values:
				editing && !editing.archivedAt
					? { id: editing.id, ...plateFormValues(editing) }
					: plateFormValues(newPlate(list.plates.map((p) => p.name))),
			done: (DONE as readonly string[]).includes(done ?? '')
				? { what: done as (typeof DONE)[number], name: event.url.searchParams.get('name') ?? '' }
				: null
		};
	});

/** One change by a lab administrator: guarded before the form is read, a refused form comes back with what was typed. */
async function change(event: RequestEvent, work: (input: Record<string, FormDataEntryValue>) => Promise<{ name: string }>, what: string) {
	await requireLab(event, 'equipment.manage');
	const form = await event.request.formData();
	return formEdge(
		event,
		async () => {
			const plate = await work(Object.fromEntries(form));
			redirect(303, `${HERE}?done=${what}&name=${encodeURIComponent(plate.name)}`);
		},
		{ values: formValues(form) }
	);
}

const idOf = (input: Record<string, FormDataEntryValue>) => (typeof input.id === 'string' ? input.id : '');

export const actions: Actions = {
	create: (event) => change(event, (input) => createPlate(...callerOf(event), plateFromForm(input)), 'created'),
	update: (event) => change(event, (input) => updatePlate(...callerOf(event), idOf(input), plateFromForm(input)), 'changed'),
	archive: (event) =>
		change(
			event,
			async (input) => {
				if (input.confirm !== 'yes')
					throw new FormProblem({
						form: 'Archiving was not confirmed. Use “Archive…” beside the plate and confirm on the panel that opens.'
					});
				return archivePlate(...callerOf(event), idOf(input));
			},
			'archived'
		)
};
