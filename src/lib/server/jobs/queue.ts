// The pg-boss job queue in our PostgreSQL (schema "jobs"): queue names, payload schemas, enqueueing.
import PgBoss from 'pg-boss';
import { createHash } from 'node:crypto';
import { config } from '../config';
import { mailMessage, type MailMessage } from '../mail/index';

export const QUEUES = {
	/** Sends one e-mail; retried with back-off, so a short SMTP outage loses nothing. */
	mailSend: 'mail-send',
	/** Processes one run (data: { runId }); the job id is the run's id, so a run is queued once per attempt series. */
	runProcess: 'run-process',
	/** Dead letters of run-process: jobs that ran out of attempts without their handler finishing (worker lost). */
	runAbandoned: 'run-process-abandoned'
} as const;

/** Retries of a run after a crash or an error before it stays failed (a person can still retry it). */
export const RUN_RETRY_LIMIT = 3;

let boss: PgBoss | null = null;
let starting: Promise<PgBoss> | null = null;

/** Starts (once) and returns the queue client, creating our queues if they are missing. */
export async function queue(): Promise<PgBoss> {
	if (boss) return boss;
	starting ??= (async () => {
		const c = config();
		// maintenance moves jobs of a vanished worker (expired while active) back to retry; see RUN_EXPIRE_SECONDS
		const b = new PgBoss({
			connectionString: c.DATABASE_URL,
			schema: 'jobs',
			application_name: 'momentry-queue',
			maintenanceIntervalSeconds: c.QUEUE_MAINTENANCE_SECONDS
		});
		b.on('error', (err) => console.error('[queue]', err.message));
		await b.start();
		for (const name of Object.values(QUEUES)) {
			if (!(await b.getQueue(name))) {
				await b.createQueue(name, { name, retryLimit: 5, retryDelay: 10, retryBackoff: true });
			}
		}
		boss = b;
		return b;
	})();
	try {
		return await starting;
	} finally {
		starting = null;
	}
}

/** A job id derived from a caller's key, so the same logical job inserted twice is stored once. */
export function jobIdFor(key: string): string {
	const h = createHash('sha256').update(key).digest('hex');
	return `${h.slice(0, 8)}-${h.slice(8, 12)}-5${h.slice(13, 16)}-a${h.slice(17, 20)}-${h.slice(20, 32)}`;
}

/**
 * Queues an e-mail. With `dedupeKey`, a caller that retries (after a crash, a double click) enqueues it only
 * once: the job id is derived from the key and a second insert is ignored, returning null.
 */
export async function enqueueMail(message: MailMessage, dedupeKey?: string): Promise<string | null> {
	const m = mailMessage.parse(message);
	return (await queue()).send(QUEUES.mailSend, m, dedupeKey ? { id: jobIdFor(dedupeKey) } : {});
}

/** The id of a run's processing job: the run's id for its first, one derived from the key for a person's retry. */
export const runJobId = (runId: string, jobKey?: string): string => (jobKey ? jobIdFor(jobKey) : runId);

/**
 * Queues the processing of a run. The job id defaults to the run id, so a second insert for the same run is ignored
 * (returns null); a person's retry passes a fresh key. A job whose worker vanished (killed, machine lost) is
 * handed to another worker once it has been active RUN_EXPIRE_SECONDS, which must exceed the longest run.
 */
export async function enqueueRun(runId: string, jobKey?: string): Promise<string | null> {
	return (await queue()).send(
		QUEUES.runProcess,
		{ runId },
		{
			id: runJobId(runId, jobKey),
			retryLimit: RUN_RETRY_LIMIT,
			retryDelay: 2,
			retryBackoff: true,
			expireInSeconds: config().RUN_EXPIRE_SECONDS,
			deadLetter: QUEUES.runAbandoned
		}
	);
}

/** Whether the run-process job with this id is still waiting, waiting to be retried, or being worked on. */
export async function pendingRunJob(jobId: string): Promise<boolean> {
	const job = await (await queue()).getJobById(QUEUES.runProcess, jobId);
	return job !== null && (job.state === 'created' || job.state === 'retry' || job.state === 'active');
}

export async function stopQueue(): Promise<void> {
	const b = boss;
	boss = null;
	if (b) await b.stop({ graceful: true, wait: true, timeout: 10_000 });
}
