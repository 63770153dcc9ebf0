// Worker thread for one run: the pipeline is synchronous, so it runs here while the worker's event loop stays free
// to write progress and answer the queue.
import { parentPort, workerData } from 'node:worker_threads';
import { computeRun } from '../runs/compute';
import type { RunThreadInput, RunThreadMessage } from './run-thread-types';

const port = parentPort!;
const input = workerData as RunThreadInput;
try {
	const computed = computeRun(
		input.body,
		input.setup,
		input.recording,
		input.options,
		(fraction, stage) => port.postMessage({ type: 'progress', fraction, stage } satisfies RunThreadMessage),
		input.force
	);
	const transfer = computed.series.map((s) => s.data.buffer as ArrayBuffer).filter((b, i, all) => all.indexOf(b) === i);
	port.postMessage({ type: 'done', computed } satisfies RunThreadMessage, transfer);
} catch (err) {
	const e = err as Error;
	port.postMessage({
		type: 'error',
		name: e?.name ?? 'Error',
		message: e?.message ?? String(err),
		problems: (e as { problems?: string[] }).problems
	} satisfies RunThreadMessage);
}
