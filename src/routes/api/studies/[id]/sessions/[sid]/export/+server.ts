// GET /api/studies/[id]/sessions/[sid]/export: the approved session as a ZIP (results.csv, provenance.json, README.txt, raw/).
import { callerOf, edge } from '$lib/server/http/edge';
import { exportSession } from '$lib/server/sessions/export';
import type { RequestHandler } from './$types';

/** A Node stream as a web stream for the Response, read only as fast as the client takes it. */
function webStream(source: AsyncIterable<Uint8Array>): ReadableStream<Uint8Array> {
	const it = source[Symbol.asyncIterator]();
	return new ReadableStream<Uint8Array>({
		async pull(controller) {
			const r = await it.next();
			if (r.done) controller.close();
			else controller.enqueue(r.value);
		},
		async cancel(reason) {
			await it.return?.(reason);
		}
	});
}

export const GET: RequestHandler = (event) =>
	edge(event, async () => {
		const { fileName, archive } = await exportSession(...callerOf(event), { studyId: event.params.id, sessionId: event.params.sid });
		return new Response(webStream(archive), {
			headers: {
				'content-type': 'application/zip',
				'content-disposition': `attachment; filename="${fileName}"`,
				'cache-control': 'no-store'
			}
		});
	});
