// Local stack settings: our own default ports and the data folder, each overridable by an environment variable.
import path from 'node:path';

function port(name: string, fallback: number): number {
	const raw = process.env[name];
	if (raw === undefined || raw === '') return fallback;
	const n = Number(raw);
	if (!Number.isInteger(n) || n < 1 || n > 65535) throw new Error(`${name}=${raw} is not a TCP port (1–65535)`);
	return n;
}

export function stackSettings() {
	const dataDir = path.resolve(process.env.MOMENTRY_DATA_DIR ?? '.data');
	return {
		appPort: port('MOMENTRY_PORT', 4810),
		pgPort: port('MOMENTRY_PG_PORT', 54810),
		smtpPort: port('MOMENTRY_SMTP_PORT', 4825),
		mailWebPort: port('MOMENTRY_MAIL_WEB_PORT', 4880),
		dataDir,
		pgDir: path.join(dataDir, 'pg'),
		database: process.env.MOMENTRY_DB_NAME ?? 'momentry'
	};
}
