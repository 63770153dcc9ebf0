// GET /api/studies/[id]/sessions/[sid]/export: the approved session as a ZIP (results.csv, provenance.json, README.txt, raw/).
import { exportSession } from '$lib/server/sessions/export';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = (event) => exportSession(event, event.params.id, event.params.sid);
