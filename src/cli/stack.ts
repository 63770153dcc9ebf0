// `npm start` / `npm run dev`: PostgreSQL, maildev, migrations and demo seed, the worker and the app, stopped together.
import { spawnSync } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { startCluster, type Cluster } from './lib/postgres';
import { startMaildev, type MailSink } from './lib/maildev';
import { start, stop, waitForPort, portIsFree, type Child } from './lib/proc';
import { stackSettings } from './lib/settings';
import { prepareDatabase } from './lib/prepare-db';

const dev = process.argv.includes('--dev');
const log = (m: string) => console.log(`[momentry] ${m}`);
const s = stackSettings();

let cluster: Cluster | null = null;
let mail: MailSink | null = null;
const children: Child[] = [];
let stopping: Promise<void> | null = null;

async function shutdown(code: number): Promise<never> {
	stopping ??= (async () => {
		log('stopping …');
		// Stop in reverse dependency order: app and worker first, then mail, then the database.
		await Promise.all(children.map((c) => stop(c, 'SIGTERM')));
		if (mail) await mail.stop();
		if (cluster) await cluster.stop();
		log('stopped');
	})();
	await stopping;
	process.exit(code);
}

process.on('SIGINT', () => void shutdown(0));
process.on('SIGTERM', () => void shutdown(0));

/** AUTH_SECRET from the environment, or one generated once into the data folder and reused. */
function authSecret(): string {
	if (process.env.AUTH_SECRET) return process.env.AUTH_SECRET;
	const file = path.join(s.dataDir, 'auth-secret');
	if (!fs.existsSync(file)) {
		fs.mkdirSync(s.dataDir, { recursive: true });
		fs.writeFileSync(file, randomBytes(32).toString('base64url') + '\n', { mode: 0o600 });
		log(`generated a session secret in ${path.relative(process.cwd(), file)}`);
	}
	return fs.readFileSync(file, 'utf8').trim();
}

async function main() {
	const started = performance.now();
	if (!(await portIsFree(s.appPort))) {
		throw new Error(`port ${s.appPort} is in use; stop what uses it or set MOMENTRY_PORT`);
	}

	let databaseUrl = process.env.DATABASE_URL;
	if (databaseUrl) {
		log('using the PostgreSQL server in DATABASE_URL');
	} else {
		cluster = await startCluster({ dataDir: s.pgDir, port: s.pgPort, database: s.database, log, quiet: true });
		databaseUrl = cluster.url;
		log(`PostgreSQL listening on 127.0.0.1:${s.pgPort} (data in ${path.relative(process.cwd(), s.pgDir) || s.pgDir})`);
	}
	await prepareDatabase(databaseUrl, { seed: true, log });

	let smtpUrl = process.env.SMTP_URL;
	let inbox = '(your own SMTP server, from SMTP_URL)';
	if (!smtpUrl) {
		mail = await startMaildev({ smtpPort: s.smtpPort, webPort: s.mailWebPort, quiet: true });
		smtpUrl = mail.smtpUrl;
		inbox = mail.webUrl;
	}

	const origin = process.env.ORIGIN ?? `http://127.0.0.1:${s.appPort}`;
	// BODY_SIZE_LIMIT: the adapter's own cap (512 kB) would refuse recordings; the trial upload streams and enforces UPLOAD_LIMIT_BYTES per file
	const env = {
		...process.env,
		DATABASE_URL: databaseUrl,
		SMTP_URL: smtpUrl,
		ORIGIN: origin,
		MAIL_INBOX_URL: inbox,
		AUTH_SECRET: authSecret(),
		BODY_SIZE_LIMIT: process.env.BODY_SIZE_LIMIT ?? 'Infinity'
	};

	if (!dev) {
		log('building the app …');
		const b = spawnSync(process.execPath, [path.resolve('node_modules/vite/bin/vite.js'), 'build', '--logLevel', 'warn'], {
			stdio: 'inherit',
			env
		});
		if (b.status !== 0) throw new Error(`the build failed (exit ${b.status})`);
	}

	children.push(start('worker', process.execPath, ['--import', 'tsx', 'src/cli/worker.ts'], { env }));
	const app = dev
		? start(
				'app',
				process.execPath,
				['node_modules/vite/bin/vite.js', 'dev', '--host', '127.0.0.1', '--port', String(s.appPort), '--strictPort'],
				{ env }
			)
		: start('app', process.execPath, ['build/index.js'], { env: { ...env, HOST: '127.0.0.1', PORT: String(s.appPort) } });
	children.push(app);
	await waitForPort(s.appPort, '127.0.0.1', 60_000, app);

	for (const c of children) {
		void c.exited.then((code) => {
			if (!stopping) {
				log(`${c.name} exited unexpectedly (code ${code}); stopping everything`);
				void shutdown(1);
			}
		});
	}

	const secs = ((performance.now() - started) / 1000).toFixed(1);
	console.log(`
  Momentry is running${dev ? ' (development, hot reload)' : ''} — ready in ${secs} s

    App          ${origin}
    Mail inbox   ${inbox}
    Health       ${origin}/api/health

  Demo: the Alder Creek Movement Laboratory is loaded. Sign in as admin@alder-creek.example,
  pi@…, researcher@…, technician@… or knee.researcher@alder-creek.example with the password
  momentry-demo-2026, or ask for an e-mailed link: every e-mail lands in the mail inbox above. Stop with Ctrl-C; your data stays in ${path.relative(process.cwd(), s.dataDir) || s.dataDir}/ for the next start.
`);
}

main().catch(async (err: Error) => {
	console.error(`\n[momentry] could not start: ${err.message}\n`);
	await shutdown(1);
});
