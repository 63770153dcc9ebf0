// /api/health of the built app: 200 while its PostgreSQL runs, 503 once the test has stopped that server.
import { afterAll, beforeAll, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { startCluster, type Cluster } from '../../src/cli/lib/postgres';
import { freePort, start, stop, waitForPort, type Child } from '../../src/cli/lib/proc';
import { prepareDatabase } from '../../src/cli/lib/prepare-db';

let cluster: Cluster;
let app: Child;
let dir: string;
let base: string;

beforeAll(async () => {
	const entry = `${process.env.MOMENTRY_BUILD_DIR ?? 'build'}/index.js`;
	if (!fs.existsSync(entry)) throw new Error(`${entry} is missing: \`npm test\` builds the app first`);
	dir = fs.mkdtempSync(path.join(os.tmpdir(), 'momentry-health-'));
	fs.chmodSync(dir, 0o755);
	// A cluster of its own: this test stops it, and the rest of the run must keep theirs.
	cluster = await startCluster({ dataDir: path.join(dir, 'pg'), port: await freePort(), database: 'health', ephemeral: true, quiet: true });
	await prepareDatabase(cluster.url, { seed: false, log: () => {} });
	const port = await freePort();
	base = `http://127.0.0.1:${port}`;
	app = start('app', process.execPath, [entry], {
		quiet: true,
		env: { ...process.env, DATABASE_URL: cluster.url, HOST: '127.0.0.1', PORT: String(port), ORIGIN: base }
	});
	await waitForPort(port, '127.0.0.1', 30_000, app);
});

afterAll(async () => {
	if (app) await stop(app);
	if (cluster) await cluster.stop();
	fs.rmSync(dir, { recursive: true, force: true });
});

it('answers 200 with the database up', async () => {
	const res = await fetch(`${base}/api/health`);
	expect(res.status).toBe(200);
	const body = await res.json();
	expect(body.status).toBe('ok');
	expect(body.database.status).toBe('up');
	expect(typeof body.database.latencyMs).toBe('number');
});

it('answers 503 after the database server has stopped, and the app keeps running', async () => {
	await cluster.stop();
	const res = await fetch(`${base}/api/health`);
	expect(res.status).toBe(503);
	const body = await res.json();
	expect(body.status).toBe('degraded');
	expect(body.database.status).toBe('down');
	expect(body.database.error).toBeTruthy();
	expect(app.proc.exitCode).toBeNull();
	const again = await fetch(`${base}/api/health`);
	expect(again.status).toBe(503);
});
