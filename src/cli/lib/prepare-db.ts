// Brings a database up to date: pending migrations, then the demo seed when the database is empty.
import { db, closeDb } from '../../lib/server/db/index';
import { migrateUp } from '../../lib/server/db/migrate';
import { databaseIsEmpty, loadDemoSeed } from '../../../seeds/index';

export async function prepareDatabase(url: string, opts: { seed: boolean; log: (m: string) => void }): Promise<void> {
	const sequelize = db(url);
	try {
		const applied = await migrateUp(sequelize, opts.log);
		opts.log(applied.length ? `applied ${applied.length} migration(s)` : 'database schema is up to date');
		if (opts.seed && (await databaseIsEmpty(sequelize))) {
			const { created } = await loadDemoSeed(sequelize);
			opts.log(`loaded demo data: ${created.join(', ')}`);
		}
	} finally {
		await closeDb();
	}
}
