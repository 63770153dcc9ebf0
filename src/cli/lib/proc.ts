// Child-process helpers for the CLI: spawn with prefixed output, wait for a port, stop in order.
import { spawn, type ChildProcess, type SpawnOptions } from 'node:child_process';
import net from 'node:net';

export interface Child {
	name: string;
	proc: ChildProcess;
	exited: Promise<number | null>;
	/** The last lines the child printed, kept for error reports when it dies. */
	tail: string[];
}

/** Spawns a long-running child in its own process group, prefixing each output line with its name. */
export function start(name: string, cmd: string, args: string[], opts: SpawnOptions & { quiet?: boolean } = {}): Child {
	const proc = spawn(cmd, args, { stdio: ['ignore', 'pipe', 'pipe'], detached: true, ...opts });
	const prefix = `[${name}] `;
	const tail: string[] = [];
	const pipe = (stream: NodeJS.ReadableStream | null, out: NodeJS.WriteStream) => {
		if (!stream) return;
		let buf = '';
		stream.on('data', (chunk: Buffer) => {
			buf += chunk.toString();
			const lines = buf.split('\n');
			buf = lines.pop() ?? '';
			for (const l of lines) {
				tail.push(l);
				if (tail.length > 40) tail.shift();
				if (!opts.quiet) out.write(prefix + l + '\n');
			}
		});
	};
	pipe(proc.stdout, process.stdout);
	pipe(proc.stderr, process.stderr);
	const exited = new Promise<number | null>((resolve) => {
		proc.on('exit', (code, signal) => resolve(code ?? (signal ? 128 : null)));
		proc.on('error', (err) => {
			process.stderr.write(`${prefix}could not start ${cmd}: ${err.message}\n`);
			resolve(127);
		});
	});
	return { name, proc, exited, tail };
}

/** Sends `signal` to the child's process group and waits for it to exit, escalating to SIGKILL. */
export async function stop(child: Child, signal: NodeJS.Signals = 'SIGTERM', graceMs = 15_000): Promise<void> {
	if (child.proc.exitCode !== null || child.proc.signalCode !== null) return;
	const pid = child.proc.pid;
	if (!pid) return;
	try {
		process.kill(-pid, signal);
	} catch {
		return;
	}
	const timer = setTimeout(() => {
		try {
			process.kill(-pid, 'SIGKILL');
		} catch {
			/* already gone */
		}
	}, graceMs);
	await child.exited;
	clearTimeout(timer);
}

/** Resolves when something accepts TCP connections on host:port, or rejects after timeoutMs. */
export async function waitForPort(port: number, host = '127.0.0.1', timeoutMs = 30_000, child?: Child): Promise<void> {
	const deadline = Date.now() + timeoutMs;
	for (;;) {
		if (child && child.proc.exitCode !== null) throw new Error(`${child.name} exited before it listened on ${host}:${port}`);
		const ok = await new Promise<boolean>((resolve) => {
			const s = net.connect({ port, host });
			s.once('connect', () => (s.destroy(), resolve(true)));
			s.once('error', () => resolve(false));
		});
		if (ok) return;
		if (Date.now() > deadline) throw new Error(`nothing listened on ${host}:${port} within ${timeoutMs / 1000} s`);
		await new Promise((r) => setTimeout(r, 150));
	}
}

/** True when nothing listens on host:port. */
export async function portIsFree(port: number, host = '127.0.0.1'): Promise<boolean> {
	return new Promise((resolve) => {
		const srv = net.createServer();
		srv.once('error', () => resolve(false));
		srv.listen(port, host, () => srv.close(() => resolve(true)));
	});
}

/** A port the kernel says is free on loopback right now. */
export async function freePort(host = '127.0.0.1'): Promise<number> {
	return new Promise((resolve, reject) => {
		const srv = net.createServer();
		srv.once('error', reject);
		srv.listen(0, host, () => {
			const addr = srv.address();
			const port = typeof addr === 'object' && addr ? addr.port : 0;
			srv.close(() => resolve(port));
		});
	});
}
