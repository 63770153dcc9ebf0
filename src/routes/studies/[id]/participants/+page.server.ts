// The participants of a study: search by code, sort and paging on the server; personal data only for PI and technicians.
import { listParticipants } from '$lib/server/participants';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => ({ ...(await listParticipants(event, event.params.id)), added: event.url.searchParams.get('added') });
