// Integration-test helpers: a fresh database per test file on the run's PostgreSQL cluster, and maildev's inbox.
import pg from 'pg';
import { randomBytes } from 'node:crypto';
import { afterAll, beforeAll } from 'vitest';
import type { Sequelize } from 'sequelize';
import { closeDb, db } from '../../src/lib/server/db/index';
import { migrateUp } from '../../src/lib/server/db/migrate';

function adminUrl(): string {
	const url = process.env.TEST_PG_ADMIN_URL;
	if (!url) throw new Error('TEST_PG_ADMIN_URL is not set: run the integration tests through `npm test`');
	return url;
}

/** Creates an empty database named after `label` and returns its URL and a function that drops it. */
export async function freshDatabase(label: string): Promise<{ url: string; drop: () => Promise<void> }> {
	const name = `t_${label.replace(/\W/g, '_')}_${randomBytes(3).toString('hex')}`;
	const admin = new pg.Client({ connectionString: adminUrl() });
	await admin.connect();
	await admin.query(`CREATE DATABASE ${name}`);
	await admin.end();
	return {
		url: adminUrl().replace(/\/postgres$/, `/${name}`),
		drop: async () => {
			const c = new pg.Client({ connectionString: adminUrl() });
			await c.connect();
			await c.query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`);
			await c.end();
		}
	};
}

/**
 * A fresh database for this test file, migrated to the latest schema and opened as the app's connection before the
 * file's tests, closed and dropped after them. Returns a getter: the connection exists only once beforeAll has run.
 */
export function useMigratedDatabase(label: string): () => Sequelize {
	let sequelize: Sequelize | undefined;
	let drop: () => Promise<void> = async () => {};
	beforeAll(async () => {
		const fresh = await freshDatabase(label);
		drop = fresh.drop;
		sequelize = db(fresh.url);
		await migrateUp(sequelize);
	});
	afterAll(async () => {
		await closeDb();
		await drop();
	});
	return () => {
		if (!sequelize) throw new Error('the database is opened in beforeAll');
		return sequelize;
	};
}

export interface InboxMessage {
	id: string;
	subject: string;
	to: { address: string; name?: string }[];
	text?: string;
	html?: string;
}

/**
 * Polls maildev's REST API until a message to `address` arrives. Test files run side by side and share one maildev
 * and the demo addresses, so pass `base` (the app's own URL, which its links carry) and, where useful, `subject`.
 */
export async function waitForMail(
	address: string,
	opts: number | { timeoutMs?: number; subject?: RegExp; base?: string } = {}
): Promise<InboxMessage> {
	const { timeoutMs = 20_000, subject, base: appBase } = typeof opts === 'number' ? { timeoutMs: opts } : opts;
	const base = process.env.MAILDEV_URL;
	if (!base) throw new Error('MAILDEV_URL is not set: run the integration tests through `npm test`');
	const deadline = Date.now() + timeoutMs;
	for (;;) {
		const res = await fetch(`${base}/api/email`);
		const all = (await res.json()) as InboxMessage[];
		const hit = all.find(
			(m) =>
				m.to?.some((t) => t.address.toLowerCase() === address.toLowerCase()) &&
				(!subject || subject.test(m.subject)) &&
				(!appBase || (m.text ?? '').includes(appBase))
		);
		if (hit) return hit;
		if (Date.now() > deadline)
			throw new Error(
				`no e-mail to ${address}${subject ? ` matching ${subject}` : ''}${appBase ? ` from ${appBase}` : ''} arrived within ${timeoutMs} ms`
			);
		await new Promise((r) => setTimeout(r, 200));
	}
}
