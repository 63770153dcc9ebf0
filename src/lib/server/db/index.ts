// The one Sequelize connection for this process, created lazily from DATABASE_URL.
import { Sequelize } from 'sequelize';
import pg from 'pg';
import { config } from '../config';
import { initModels } from './models';

let instance: Sequelize | null = null;

/**
 * Sets up (once) and returns the connection pool with every model registered. The app's hooks, the worker and the
 * command line call it at start-up; services use the models without calling it.
 */
export function db(url?: string): Sequelize {
	if (instance) return instance;
	instance = new Sequelize(url ?? config().DATABASE_URL, {
		dialect: 'postgres',
		dialectModule: pg,
		logging: false,
		pool: { max: 10, min: 0, idle: 10_000, acquire: 10_000 },
		dialectOptions: { connectionTimeoutMillis: 3_000, application_name: 'momentry' },
		define: { underscored: true, timestamps: false }
	});
	initModels(instance);
	return instance;
}

/** Closes the connection; the next `db()` call opens a fresh one. */
export async function closeDb(): Promise<void> {
	const s = instance;
	instance = null;
	if (s) await s.close();
}

/** Resolves when the database answers a trivial query within `timeoutMs`, rejects otherwise. */
export async function ping(timeoutMs = 2_000): Promise<number> {
	const started = performance.now();
	let timer: ReturnType<typeof setTimeout> | undefined;
	const timeout = new Promise<never>((_, reject) => {
		timer = setTimeout(() => reject(new Error(`no answer within ${timeoutMs} ms`)), timeoutMs);
	});
	try {
		await Promise.race([db().query('SELECT 1'), timeout]);
		return performance.now() - started;
	} finally {
		clearTimeout(timer);
	}
}
