// Migration runner (umzug over Sequelize), used by `npm run db:migrate`, the launcher and tests.
import { Umzug, SequelizeStorage } from 'umzug';
import type { QueryInterface, Sequelize } from 'sequelize';
import { migrations } from './migrations/index';

export function migrator(sequelize: Sequelize, log: (msg: string) => void = () => {}) {
	return new Umzug<QueryInterface>({
		migrations: migrations.map((m) => ({
			name: m.name,
			up: async (params) => {
				// Each migration runs in its own transaction, so a failure leaves the schema as it was.
				await sequelize.transaction(async () => m.up(params));
			},
			down: async (params) => {
				await sequelize.transaction(async () => m.down(params));
			}
		})),
		context: sequelize.getQueryInterface(),
		storage: new SequelizeStorage({ sequelize, tableName: 'schema_migrations' }),
		logger: {
			info: (e) => {
				const ev = e as { event?: string; name?: string };
				if (ev.event === 'migrated' || ev.event === 'reverted') log(`${ev.event} ${ev.name}`);
			},
			warn: (e) => log(`warning: ${JSON.stringify(e)}`),
			error: (e) => log(`error: ${JSON.stringify(e)}`),
			debug: () => {}
		}
	});
}

/** Applies every pending migration; returns the names applied. */
export async function migrateUp(sequelize: Sequelize, log?: (msg: string) => void): Promise<string[]> {
	const done = await migrator(sequelize, log).up();
	return done.map((m) => m.name);
}

/** Reverts the last migration, or all of them with `{ all: true }`. */
export async function migrateDown(sequelize: Sequelize, opts: { all?: boolean } = {}, log?: (msg: string) => void): Promise<string[]> {
	const done = await migrator(sequelize, log).down(opts.all ? { to: 0 } : undefined);
	return done.map((m) => m.name);
}

export async function pendingMigrations(sequelize: Sequelize): Promise<string[]> {
	return (await migrator(sequelize).pending()).map((m) => m.name);
}
