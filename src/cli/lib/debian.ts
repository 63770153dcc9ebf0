// Debian packages the launcher and the tests need, installed with apt-get when we are root (a fresh machine);
// otherwise the command to run is named.
import { spawnSync } from 'node:child_process';

export const isRoot = (): boolean => process.getuid?.() === 0;

/** The apt-get command a person would run for these packages. */
export const aptCommand = (packages: string[]): string => `apt-get update && apt-get install -y ${packages.join(' ')}`;

/**
 * Installs the packages with apt-get (no recommends, non-interactive). Returns false, installing nothing, when we
 * are not root; throws naming the failed step when apt-get fails.
 */
export function aptInstall(packages: string[], log: (m: string) => void): boolean {
	if (!packages.length) return true;
	if (!isRoot()) return false;
	log(`installing Debian's ${packages.join(', ')} (${aptCommand(packages)}) …`);
	const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
	for (const args of [
		['update', '-qq'],
		['install', '-y', '-qq', '--no-install-recommends', ...packages]
	]) {
		const r = spawnSync('apt-get', args, { stdio: 'inherit', env });
		if (r.status !== 0) throw new Error(`\`apt-get ${args.join(' ')}\` failed (exit ${r.status}); run \`${aptCommand(packages)}\` by hand`);
	}
	return true;
}
