// Migrations on a real PostgreSQL: up on an empty database, down to nothing, and up again; the audit log is append-only.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes, type Sequelize } from 'sequelize';
import { db, closeDb } from '../../src/lib/server/db/index';
import { migrateUp, migrateDown, pendingMigrations } from '../../src/lib/server/db/migrate';
import { migrations } from '../../src/lib/server/db/migrations/index';
import { freshDatabase } from './helpers';

let sequelize: Sequelize;
let drop: () => Promise<void>;

async function tables(): Promise<string[]> {
	const rows = await sequelize.query<{ name: string }>(
		`SELECT table_name::text AS name FROM information_schema.tables WHERE table_schema = 'public' ORDER BY table_name`,
		{ type: QueryTypes.SELECT }
	);
	return rows.map((r) => r.name);
}

beforeAll(async () => {
	const fresh = await freshDatabase('migrations');
	drop = fresh.drop;
	sequelize = db(fresh.url);
});
afterAll(async () => {
	await closeDb();
	await drop();
});

describe('migrations', () => {
	it('go up on an empty database', async () => {
		expect(await tables()).toEqual([]);
		const applied = await migrateUp(sequelize);
		expect(applied).toEqual(migrations.map((m) => m.name));
		expect(await tables()).toEqual(expect.arrayContaining(['audit_events', 'labs', 'schema_migrations']));
		expect(await pendingMigrations(sequelize)).toEqual([]);
	});

	it('refuse to change or delete an audit event', async () => {
		await sequelize.query(`INSERT INTO audit_events (actor_label, action) VALUES ('test', 'test.event')`);
		await expect(sequelize.query(`UPDATE audit_events SET action = 'x'`)).rejects.toThrow(/append-only/);
		await expect(sequelize.query(`DELETE FROM audit_events`)).rejects.toThrow(/append-only/);
		await expect(sequelize.query(`INSERT INTO audit_events (actor_label, action, outcome) VALUES ('t', 'a', 'maybe')`)).rejects.toThrow(
			/outcome_check/
		);
	});

	it('go down to an empty schema', async () => {
		const reverted = await migrateDown(sequelize, { all: true });
		expect(reverted).toEqual(migrations.map((m) => m.name).reverse());
		expect(await tables()).toEqual(['schema_migrations']);
		const fns = await sequelize.query(`SELECT proname FROM pg_proc WHERE proname = 'audit_events_append_only'`, {
			type: QueryTypes.SELECT
		});
		expect(fns).toEqual([]);
	});

	it('go up again', async () => {
		await migrateUp(sequelize);
		expect(await tables()).toEqual(expect.arrayContaining(['audit_events', 'labs']));
		expect(await pendingMigrations(sequelize)).toEqual([]);
	});
});
