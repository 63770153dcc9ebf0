// What the new-session and edit pages share: the form's load (with today's date for the date field) and its action
// (a refused form comes back with the person's values; a saved one redirects).
import { redirect, type RequestEvent } from '@sveltejs/kit';
import { callerOf, edge, formEdge } from '$lib/server/http/edge';
import { formValuesFrom } from '$lib/server/sessions/sessions';
import type { Actor } from '$lib/server/access/guard';
import type { RequestContext } from '$lib/server/access/context';

type Service<T> = (actor: Actor | null, ctx: RequestContext) => Promise<T>;

export const sessionFormLoad = async <T extends object>(event: RequestEvent, read: Service<T>) =>
	edge(event, async () => ({ ...(await read(...callerOf(event))), today: new Date().toISOString().slice(0, 10) }));

/** Saves the posted session form with `save`, then goes to the address it returns. */
export async function sessionFormAction(
	event: RequestEvent,
	save: (actor: Actor | null, ctx: RequestContext, form: FormData) => Promise<string>
) {
	const form = await event.request.formData();
	return formEdge(event, async () => redirect(303, await save(...callerOf(event), form)), { extra: { values: formValuesFrom(form) } });
}
