// Background worker: registers a handler per queue; each handler is safe to run again on retry.
import type PgBoss from 'pg-boss';
import { queue, QUEUES } from './queue';
import { sendMail, mailMessage } from '../mail/index';
import { abandonRun, processRun } from '../runs/process';
import { db } from '../db/index';

const runJob = (data: unknown): string => {
	const runId = (data as { runId?: unknown })?.runId;
	if (typeof runId !== 'string') throw new Error('a run-process job needs { runId }');
	return runId;
};

export async function startWorker(log: (msg: string) => void = console.log): Promise<PgBoss> {
	db(); // the connection pool and every model, set up once when the worker starts
	const boss = await queue();
	await boss.work(QUEUES.mailSend, { batchSize: 5 }, async (jobs) => {
		for (const job of jobs) {
			const message = mailMessage.parse(job.data);
			const id = await sendMail(message);
			log(`mail sent to ${message.to} (${id})`);
		}
	});
	// one run at a time per worker: the computation is CPU-bound (in a thread); more machines mean more workers
	await boss.work(QUEUES.runProcess, { batchSize: 1, includeMetadata: true, pollingIntervalSeconds: 1 }, async ([job]) => {
		const runId = runJob(job.data);
		log(`run ${runId}: attempt ${job.retryCount + 1} of ${job.retryLimit + 1}`);
		const out = await processRun(runId, { retryCount: job.retryCount, retryLimit: job.retryLimit });
		log(`run ${runId}: ${out.state}${out.error ? ` (${out.error})` : ''}`);
	});
	await boss.work(QUEUES.runAbandoned, { batchSize: 5 }, async (jobs) => {
		for (const job of jobs) await abandonRun(runJob(job.data));
	});
	log(`worker listening on queues: ${Object.values(QUEUES).join(', ')}`);
	return boss;
}
