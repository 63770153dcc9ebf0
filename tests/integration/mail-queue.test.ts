// The job queue end to end: an e-mail enqueued in PostgreSQL (pg-boss) is sent by the worker over SMTP to maildev.
import { afterAll, beforeAll, expect, it } from 'vitest';
import { randomBytes } from 'node:crypto';
import { db, closeDb } from '../../src/lib/server/db/index';
import { migrateUp } from '../../src/lib/server/db/migrate';
import { resetConfig } from '../../src/lib/server/config';
import { enqueueMail, stopQueue } from '../../src/lib/server/jobs/queue';
import { startWorker } from '../../src/lib/server/jobs/worker';
import { closeMail } from '../../src/lib/server/mail/index';
import { freshDatabase, waitForMail } from './helpers';

let drop: () => Promise<void>;
const saved = process.env.DATABASE_URL;

beforeAll(async () => {
	const fresh = await freshDatabase('queue');
	drop = fresh.drop;
	process.env.DATABASE_URL = fresh.url;
	resetConfig();
	await migrateUp(db());
});
afterAll(async () => {
	await stopQueue();
	await closeDb();
	closeMail();
	await drop();
	process.env.DATABASE_URL = saved;
	resetConfig();
});

it('delivers a queued e-mail through the worker', async () => {
	await startWorker(() => {});
	const to = `queue-${randomBytes(4).toString('hex')}@example.org`;
	const id = await enqueueMail({ to, subject: 'Queue check', text: 'Sent through pg-boss and SMTP.' });
	expect(id).toBeTruthy();
	const msg = await waitForMail(to);
	expect(msg.subject).toBe('Queue check');
	expect(msg.text?.trim()).toBe('Sent through pg-boss and SMTP.');
});

it('enqueues a message with the same dedupe key only once', async () => {
	const to = `once-${randomBytes(4).toString('hex')}@example.org`;
	const key = `test-${to}`;
	const first = await enqueueMail({ to, subject: 'Once', text: 'x' }, key);
	const second = await enqueueMail({ to, subject: 'Once', text: 'x' }, key);
	expect(first).toBeTruthy();
	expect(second).toBeNull();
});

it('refuses a malformed message before it reaches the queue', async () => {
	await expect(enqueueMail({ to: 'not-an-address', subject: 'x', text: 'x' })).rejects.toThrow(/email/i);
});
