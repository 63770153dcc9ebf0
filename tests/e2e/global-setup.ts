// Playwright global set-up: the job worker runs next to the app (as `npm start` does), so runs started in e2e tests complete.
import { start, stop } from '../../src/cli/lib/proc';

export default async function globalSetup(): Promise<() => Promise<void>> {
	const worker = start('worker', process.execPath, ['--import', 'tsx', 'src/cli/worker.ts'], { quiet: true, env: process.env });
	const deadline = Date.now() + 30_000;
	while (!worker.tail.some((l) => l.includes('worker listening'))) {
		if (worker.proc.exitCode !== null) throw new Error(`the worker exited (code ${worker.proc.exitCode}): ${worker.tail.join('\n')}`);
		if (Date.now() > deadline) throw new Error(`the worker did not start within 30 s: ${worker.tail.join('\n')}`);
		await new Promise((r) => setTimeout(r, 100));
	}
	// the returned function is Playwright's teardown
	return async () => stop(worker, 'SIGTERM', 10_000);
}
