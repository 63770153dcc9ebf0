// The pg-boss job queue in our PostgreSQL (schema "jobs"): queue names, payload schemas, enqueueing.
import PgBoss from 'pg-boss';
import { createHash } from 'node:crypto';
import { config } from '../config';
import { mailMessage, type MailMessage } from '../mail/index';

export const QUEUES = {
	/** Sends one e-mail; retried with back-off, so a short SMTP outage loses nothing. */
	mailSend: 'mail-send'
} as const;

let boss: PgBoss | null = null;
let starting: Promise<PgBoss> | null = null;

/** Starts (once) and returns the queue client, creating our queues if they are missing. */
export async function queue(): Promise<PgBoss> {
	if (boss) return boss;
	starting ??= (async () => {
		const b = new PgBoss({ connectionString: config().DATABASE_URL, schema: 'jobs', application_name: 'momentry-queue' });
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

export async function stopQueue(): Promise<void> {
	const b = boss;
	boss = null;
	if (b) await b.stop({ graceful: true, wait: true, timeout: 10_000 });
}
