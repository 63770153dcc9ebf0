// `npm run bench:upload`: the app's memory while it receives a generated 100 MB recording (RSS from /proc/<pid>/status).
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { randomBytes } from 'node:crypto';
import { spawnSync } from 'node:child_process';
import pg from 'pg';
import { startCluster, type Cluster } from './lib/postgres';
import { prepareDatabase } from './lib/prepare-db';
import { freePort, stop, type Child } from './lib/proc';
import { sessionCookie, startBuiltApp } from './lib/built-app';

const FILE_BYTES = Number(process.env.BENCH_UPLOAD_BYTES ?? 100_000_000);
const log = (m: string) => console.log(`[bench:upload] ${m}`);

/** VmRSS and VmHWM of a process, in bytes. */
function memoryOf(pid: number): { rss: number; hwm: number } {
	const status = fs.readFileSync(`/proc/${pid}/status`, 'utf8');
	const kb = (key: string) => Number(new RegExp(`^${key}:\\s+(\\d+) kB`, 'm').exec(status)?.[1] ?? NaN) * 1024;
	return { rss: kb('VmRSS'), hwm: kb('VmHWM') };
}

const MB = (b: number) => `${(b / 1048576).toFixed(1)} MB`;

/** A recording in our layout for the given channels, generated block by block up to `bytes` (whole lines). */
function recordingStream(channels: string[], bytes: number, header?: string): ReadableStream<Uint8Array> {
	const head = Buffer.from((header ?? ['time (s)', ...channels.map((c) => `${c} (deg)`)].join(',')) + '\n');
	let sent = 0;
	let k = 0;
	let headDone = false;
	return new ReadableStream<Uint8Array>({
		pull(c) {
			if (!headDone) {
				headDone = true;
				sent += head.length;
				return c.enqueue(head);
			}
			if (sent >= bytes) return c.close();
			const lines: string[] = [];
			let n = 0;
			while (n < 256 * 1024) {
				const t = k / 1000;
				const row = [t.toFixed(3), ...channels.map((_, i) => (20 + 10 * Math.sin(2 * Math.PI * 0.4 * t + i)).toFixed(6))].join(',') + '\n';
				if (sent + n + row.length > bytes) break;
				lines.push(row);
				n += row.length;
				k++;
			}
			if (n === 0) return c.close();
			sent += n;
			c.enqueue(Buffer.from(lines.join('')));
		}
	});
}

/** multipart/form-data around a streamed file, without holding the file. */
function multipart(file: ReadableStream<Uint8Array>, name: string, boundary: string): ReadableStream<Uint8Array> {
	const head = Buffer.from(
		`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="${name}"\r\nContent-Type: text/csv\r\n\r\n`
	);
	const tail = Buffer.from(`\r\n--${boundary}--\r\n`);
	const reader = file.getReader();
	let phase = 0;
	return new ReadableStream<Uint8Array>({
		async pull(c) {
			if (phase === 0) {
				phase = 1;
				return c.enqueue(head);
			}
			if (phase === 1) {
				const r = await reader.read();
				if (!r.done) return c.enqueue(r.value);
				phase = 2;
				return c.enqueue(tail);
			}
			c.close();
		}
	});
}

interface Measured {
	status: number;
	seconds: number;
	baseline: number;
	peak: number;
	hwmBefore: number;
	hwmAfter: number;
	message: string;
}

async function measure(
	app: Child,
	url: string,
	cookie: string,
	base: string,
	body: ReadableStream<Uint8Array>,
	boundary: string
): Promise<Measured> {
	global.gc?.();
	await new Promise((r) => setTimeout(r, 1500));
	const before = memoryOf(app.proc.pid!);
	let peak = before.rss;
	const timer = setInterval(() => (peak = Math.max(peak, memoryOf(app.proc.pid!).rss)), 25);
	const t0 = performance.now();
	const res = await fetch(url, {
		method: 'POST',
		body,
		duplex: 'half',
		headers: { cookie, origin: base, accept: 'application/json', 'content-type': `multipart/form-data; boundary=${boundary}` }
	} as RequestInit);
	const text = await res.text();
	const seconds = (performance.now() - t0) / 1000;
	clearInterval(timer);
	const after = memoryOf(app.proc.pid!);
	peak = Math.max(peak, after.rss);
	let message = text.slice(0, 200);
	try {
		message = JSON.parse(text).message ?? message;
	} catch {
		/* keep the text */
	}
	return { status: res.status, seconds, baseline: before.rss, peak, hwmBefore: before.hwm, hwmAfter: after.hwm, message };
}

async function main(): Promise<number> {
	const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'momentry-bench-'));
	fs.chmodSync(tmp, 0o755);
	const runDir = path.join('.test-artifacts', `bench-upload-${process.pid}`);
	let cluster: Cluster | null = null;
	let app: Child | null = null;
	try {
		cluster = await startCluster({
			dataDir: path.join(tmp, 'pg'),
			port: await freePort(),
			database: 'momentry_bench',
			ephemeral: true,
			quiet: true,
			log
		});
		const env: NodeJS.ProcessEnv = {
			...process.env,
			MOMENTRY_BUILD_DIR: path.join(runDir, 'build'),
			MOMENTRY_KIT_DIR: path.join(runDir, 'kit')
		};
		log('building the app …');
		const b = spawnSync(process.execPath, ['node_modules/vite/bin/vite.js', 'build', '--logLevel', 'error'], { env, stdio: 'inherit' });
		if (b.status !== 0) throw new Error('the build failed');
		await prepareDatabase(cluster.url, { seed: true, log: () => {} });
		const started = await startBuiltApp(path.join(runDir, 'build', 'index.js'), {
			...env,
			DATABASE_URL: cluster.url,
			AUTH_SECRET: randomBytes(32).toString('base64url'),
			SMTP_URL: 'smtp://127.0.0.1:9'
		});
		app = started.app;
		const base = started.base;
		const cookie = await sessionCookie(base, 'technician@alder-creek.example', 'momentry-demo-2026');

		const sql = new pg.Client({ connectionString: cluster.url });
		await sql.connect();
		const s = (
			await sql.query<{ id: string; study_id: string; limbs: string[] }>(
				`SELECT s.id, s.study_id, s.setup->'limbs' AS limbs FROM sessions s JOIN participants p ON p.id = s.participant_id WHERE p.code = 'ALD-001' LIMIT 1`
			)
		).rows[0];
		const channels = (await sql.query<{ channels: string[] }>(`SELECT channels FROM trials t WHERE t.session_id = $1 LIMIT 1`, [s.id]))
			.rows[0].channels;
		await sql.end();
		const url = `${base}/api/studies/${s.study_id}/sessions/${s.id}/trials`;
		const boundary = `bench-${randomBytes(6).toString('hex')}`;

		// warm-up: the first request loads the route's code
		await measure(app, url, cookie, base, multipart(recordingStream(channels, 200_000), 'warm-up.csv', boundary), boundary);

		// the refused file first: memory the parser takes for a stored file is not all handed back to the system,
		// which would hide the cost of the upload path itself
		const cases: [string, ReadableStream<Uint8Array>][] = [
			[
				`${MB(FILE_BYTES)} file in another layout (refused at the header: streaming, hashing, draining only)`,
				multipart(
					recordingStream(channels, FILE_BYTES, ['frame', ...channels.map((_, i) => `col${i}`)].join(',')),
					'bench-foreign.csv',
					boundary
				)
			],
			[
				`valid ${MB(FILE_BYTES)} recording (${channels.length} channels, stored)`,
				multipart(recordingStream(channels, FILE_BYTES), 'bench-valid.csv', boundary)
			]
		];
		for (const [label, body] of cases) {
			const m = await measure(app, url, cookie, base, body, boundary);
			log(`${label}`);
			log(`  answer ${m.status} in ${m.seconds.toFixed(1)} s (${(FILE_BYTES / 1e6 / m.seconds).toFixed(1)} MB/s): ${m.message}`);
			log(
				`  app RSS ${MB(m.baseline)} before, peak ${MB(m.peak)} during (increase ${MB(m.peak - m.baseline)}); VmHWM ${MB(m.hwmBefore)} → ${MB(m.hwmAfter)}`
			);
		}
		return 0;
	} finally {
		if (app) await stop(app);
		if (cluster) await cluster.stop();
		fs.rmSync(tmp, { recursive: true, force: true });
		fs.rmSync(runDir, { recursive: true, force: true });
	}
}

main().then(
	(code) => process.exit(code),
	(err) => {
		console.error('[bench:upload]', err);
		process.exit(1);
	}
);
