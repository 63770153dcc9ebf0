// `npm run db:migrate | db:rollback | db:seed | db:status`: schema and demo data, against DATABASE_URL or the local cluster.
import { db, closeDb } from '../lib/server/db/index';
import { migrateUp, migrateDown, pendingMigrations } from '../lib/server/db/migrate';
import { loadDemoSeed } from '../../seeds/index';
import { startCluster, runningClusterUrl, type Cluster } from './lib/postgres';
import { stackSettings } from './lib/settings';

const [command, ...rest] = process.argv.slice(2);
const log = (m: string) => console.log(m);
const usage = 'usage: tsx src/cli/db.ts migrate | rollback [--all] | seed | status';

async function main(): Promise<number> {
	if (!['migrate', 'rollback', 'seed', 'status'].includes(command ?? '')) {
		console.error(usage);
		return 2;
	}
	const s = stackSettings();
	let cluster: Cluster | null = null;
	let url = process.env.DATABASE_URL ?? runningClusterUrl(s.pgDir, s.database);
	if (!url) {
		cluster = await startCluster({ dataDir: s.pgDir, port: s.pgPort, database: s.database, log, quiet: true });
		url = cluster.url;
	}
	try {
		const sequelize = db(url);
		if (command === 'migrate') {
			const done = await migrateUp(sequelize, log);
			log(done.length ? `applied: ${done.join(', ')}` : 'nothing to migrate');
		} else if (command === 'rollback') {
			const done = await migrateDown(sequelize, { all: rest.includes('--all') }, log);
			log(done.length ? `reverted: ${done.join(', ')}` : 'nothing to revert');
		} else if (command === 'seed') {
			const { created } = await loadDemoSeed(sequelize);
			log(created.length ? `created: ${created.join(', ')}` : 'demo data already present; nothing changed');
		} else {
			const pending = await pendingMigrations(sequelize);
			log(pending.length ? `pending: ${pending.join(', ')}` : 'schema is up to date');
		}
		return 0;
	} finally {
		await closeDb();
		if (cluster) await cluster.stop();
	}
}

main().then(
	(code) => process.exit(code),
	(err: Error) => {
		console.error(err.message);
		process.exit(1);
	}
);
