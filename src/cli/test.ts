// `npm test`: svelte-check, ESLint and Prettier, then a throw-away PostgreSQL and maildev, a fresh build, vitest then Playwright;
// prints "N passed, N failed".
import { spawnSync } from 'node:child_process';
import { randomBytes } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { startCluster, type Cluster } from './lib/postgres';
import { startMaildev, type MailSink } from './lib/maildev';
import { freePort } from './lib/proc';
import { prepareDatabase } from './lib/prepare-db';
import { aptCommand, aptInstall } from './lib/debian';

const log = (m: string) => console.log(`[test] ${m}`);
const args = process.argv.slice(2);
// `npm test -- vitest`, `npm test -- e2e`, or test files (`npm test -- tests/integration/x.test.ts tests/e2e/y.spec.ts`)
const files = args.filter((a) => a !== 'vitest' && a !== 'e2e');
const vitestFiles = files.filter((f) => f.endsWith('.test.ts'));
const e2eFiles = files.filter((f) => f.endsWith('.spec.ts'));
const only = (name: 'vitest' | 'e2e') =>
	args.length === 0 || args.includes(name) || (name === 'vitest' ? vitestFiles.length > 0 : e2eFiles.length > 0);
/** Types, lint and formatting are checked by a full `npm test` only, not when a runner or some files are named. */
const staticChecks = args.length === 0;

interface Counts {
	passed: number;
	failed: number;
	skipped: number;
}

function run(cmd: string[], env: NodeJS.ProcessEnv): number {
	const r = spawnSync(cmd[0], cmd.slice(1), { stdio: 'inherit', env });
	return r.status ?? 1;
}

/**
 * The checks that need neither a database nor a build, each counted as one test: svelte-check (types, after
 * `svelte-kit sync` as `npm run check` does), ESLint and `prettier --check` (as `npm run lint`). Their output is shown as
 * they print it; returns one line per check for the end of the run.
 */
function runStaticChecks(total: Counts): string[] {
	// each step is a script under node_modules run with this Node; a check passes when all its steps do, in order
	const checks: { name: string; steps: string[][]; fix: string }[] = [
		{
			name: 'svelte-check',
			steps: [
				['node_modules/@sveltejs/kit/svelte-kit.js', 'sync'],
				['node_modules/svelte-check/bin/svelte-check', '--tsconfig', './tsconfig.json']
			],
			fix: 'npm run check'
		},
		{ name: 'eslint', steps: [['node_modules/eslint/bin/eslint.js', '.']], fix: 'npx eslint .' },
		{ name: 'prettier', steps: [['node_modules/prettier/bin/prettier.cjs', '--check', '.']], fix: 'npm run format' }
	];
	const lines: string[] = [];
	for (const check of checks) {
		log(`${check.name} …`);
		const started = performance.now();
		const ok = check.steps.every((step) => run([process.execPath, ...step], process.env) === 0);
		const seconds = ((performance.now() - started) / 1000).toFixed(1);
		if (ok) total.passed += 1;
		else total.failed += 1;
		lines.push(
			ok
				? `${check.name}: passed (${seconds} s)`
				: `${check.name}: FAILED (${seconds} s), counted as one failure; see its output above, or run: ${check.fix}`
		);
	}
	return lines;
}

function readJson(file: string): Record<string, unknown> | null {
	try {
		return JSON.parse(fs.readFileSync(file, 'utf8'));
	} catch {
		return null;
	}
}

const CHROMIUM = '/usr/bin/chromium';
/** Debian's packages of the reference libraries the fixture scripts in tests/reference use. */
const REFERENCE_PACKAGES = ['python3-sympy', 'python3-scipy', 'python3-statsmodels'];

/**
 * What a fresh machine lacks for the tests, installed as root: Debian's Chromium for the end-to-end tests, and
 * python3's sympy, scipy and statsmodels that regenerate the reference fixtures (without them the committed fixtures are used).
 * Returns a problem to count as a failure, or null.
 */
function ensureTestPackages(e2e: boolean): string | null {
	const references = ['python3', '/usr/bin/python3'].some(
		(py) => spawnSync(py, ['-c', 'import sympy, scipy, statsmodels'], { stdio: 'ignore' }).status === 0
	);
	const need = [...(e2e && !fs.existsSync(CHROMIUM) ? ['chromium'] : []), ...(references ? [] : REFERENCE_PACKAGES)];
	if (!need.length) return null;
	if (aptInstall(need, log)) return null;
	if (!references)
		log(
			`sympy/scipy/statsmodels not found: the committed reference fixtures are used (install them with: sudo sh -c '${aptCommand(REFERENCE_PACKAGES)}')`
		);
	return e2e && !fs.existsSync(CHROMIUM)
		? `Chromium is not at ${CHROMIUM}; install it with: sudo sh -c '${aptCommand(['chromium'])}'`
		: null;
}

async function main(): Promise<number> {
	const started = performance.now();
	const missing = ensureTestPackages(only('e2e'));
	const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'momentry-test-'));
	// The postgres user must be able to enter the folder when we run as root.
	fs.chmodSync(tmp, 0o755);
	let cluster: Cluster | null = null;
	let mail: MailSink | null = null;
	const total: Counts = { passed: 0, failed: 0, skipped: 0 };
	const runDir = path.join('.test-artifacts', `run-${process.pid}`);
	let staticResults: string[] = [];
	try {
		if (staticChecks) staticResults = runStaticChecks(total);
		cluster = await startCluster({
			dataDir: path.join(tmp, 'pg'),
			port: await freePort(),
			database: 'momentry_e2e',
			ephemeral: true,
			quiet: true,
			log
		});
		mail = await startMaildev({ smtpPort: await freePort(), webPort: await freePort(), quiet: true });
		log(`PostgreSQL on port ${cluster.port}, maildev on ${mail.smtpUrl} / ${mail.webUrl}`);
		const env: NodeJS.ProcessEnv = {
			...process.env,
			DATABASE_URL: cluster.url,
			TEST_PG_ADMIN_URL: cluster.url.replace(/\/[^/]+$/, '/postgres'),
			SMTP_URL: mail.smtpUrl,
			MAILDEV_URL: mail.webUrl,
			TEST_TMP: tmp,
			AUTH_SECRET: randomBytes(32).toString('base64url'),
			E2E_PORT: String(await freePort()),
			// a build of this run's own inside the repository (so node_modules resolves), removed at the end
			MOMENTRY_BUILD_DIR: path.join(runDir, 'build'),
			MOMENTRY_KIT_DIR: path.join(runDir, 'kit')
		};

		log('building the app …');
		if (run([process.execPath, 'node_modules/vite/bin/vite.js', 'build', '--logLevel', 'error'], env) !== 0) {
			total.failed += 1;
			log('the build failed; no tests were run');
			return 1;
		}

		if (only('vitest')) {
			const out = path.join(tmp, 'vitest.json');
			run(
				[
					process.execPath,
					'node_modules/vitest/vitest.mjs',
					'run',
					'--reporter=default',
					'--reporter=json',
					`--outputFile.json=${out}`,
					...vitestFiles
				],
				env
			);
			const r = readJson(out);
			if (r) {
				total.passed += Number(r.numPassedTests ?? 0);
				total.failed += Number(r.numFailedTests ?? 0) + (r.success === false && !r.numFailedTests ? 1 : 0);
				total.skipped += Number(r.numPendingTests ?? 0) + Number(r.numTodoTests ?? 0);
			} else {
				total.failed += 1;
				log('vitest wrote no report; counted as one failure');
			}
		}

		if (only('e2e') && missing) {
			total.failed += 1;
			log(`${missing}; the end-to-end tests were not run (counted as one failure)`);
		} else if (only('e2e')) {
			await prepareDatabase(cluster.url, { seed: true, log });
			const out = path.join(tmp, 'playwright.json');
			run([process.execPath, 'node_modules/@playwright/test/cli.js', 'test', '--reporter=list,json', ...e2eFiles], {
				...env,
				PLAYWRIGHT_JSON_OUTPUT_NAME: out
			});
			const r = readJson(out) as {
				stats?: { expected?: number; unexpected?: number; flaky?: number; skipped?: number };
				errors?: unknown[];
			} | null;
			if (r?.stats) {
				total.passed += (r.stats.expected ?? 0) + (r.stats.flaky ?? 0);
				total.failed += (r.stats.unexpected ?? 0) + (r.errors?.length ?? 0);
				total.skipped += r.stats.skipped ?? 0;
			} else {
				total.failed += 1;
				log('Playwright wrote no report; counted as one failure');
			}
		}
		return total.failed === 0 && total.passed > 0 ? 0 : 1;
	} finally {
		if (mail) await mail.stop();
		if (cluster) await cluster.stop();
		fs.rmSync(tmp, { recursive: true, force: true });
		fs.rmSync(runDir, { recursive: true, force: true });
		for (const line of staticResults) log(line);
		log(`finished in ${((performance.now() - started) / 1000).toFixed(1)} s`);
		if (total.skipped) log(`${total.skipped} skipped (tests that need an optional tool, e.g. regenerating a fixture with scipy)`);
		const line = `${total.passed} passed, ${total.failed} failed`;
		fs.mkdirSync('.test-artifacts', { recursive: true });
		fs.writeFileSync('.test-artifacts/summary.txt', line + '\n');
		console.log(line);
	}
}

main().then(
	(code) => process.exit(code),
	(err: Error) => {
		console.error(`[test] ${err.stack ?? err.message}`);
		console.log('0 passed, 1 failed');
		process.exit(1);
	}
);
