// GET /api/health: JSON with the database status; 200 when it answers, 503 when it does not.
import { json } from '@sveltejs/kit';
import { health } from '$lib/server/health';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async () => {
	const h = await health();
	return json(h, { status: h.status === 'ok' ? 200 : 503, headers: { 'cache-control': 'no-store' } });
};
