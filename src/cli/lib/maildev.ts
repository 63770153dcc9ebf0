// Runs maildev (SMTP sink with a web inbox) on loopback for the launcher and the tests.
import path from 'node:path';
import { start, stop, waitForPort, type Child } from './proc';

export interface MailSink {
	smtpUrl: string;
	webUrl: string;
	child: Child;
	stop(): Promise<void>;
}

export async function startMaildev(opts: { smtpPort: number; webPort: number; quiet?: boolean }): Promise<MailSink> {
	// maildev's package exports hide its bin file; it sits at the path its package.json "bin" names.
	const bin = path.resolve('node_modules/maildev/dist/bin/maildev.js');
	const child = start(
		'mail',
		process.execPath,
		[bin, '--smtp', String(opts.smtpPort), '--ip', '127.0.0.1', '--web', String(opts.webPort), '--web-ip', '127.0.0.1', '--silent'],
		{ quiet: opts.quiet }
	);
	await waitForPort(opts.smtpPort, '127.0.0.1', 30_000, child);
	await waitForPort(opts.webPort, '127.0.0.1', 30_000, child);
	return {
		smtpUrl: `smtp://127.0.0.1:${opts.smtpPort}`,
		webUrl: `http://127.0.0.1:${opts.webPort}`,
		child,
		stop: () => stop(child)
	};
}
