// Configuration checks: a missing or malformed setting is refused with the variable's name.
import { afterEach, describe, expect, it } from 'vitest';
import { config, resetConfig } from '../../src/lib/server/config';
import { stackSettings } from '../../src/cli/lib/settings';

const saved = { ...process.env };
afterEach(() => {
	process.env = { ...saved };
	resetConfig();
});

describe('server configuration', () => {
	it('names DATABASE_URL when it is missing', () => {
		delete process.env.DATABASE_URL;
		resetConfig();
		expect(() => config()).toThrow(/DATABASE_URL is not set/);
	});

	it('refuses a DATABASE_URL that is not PostgreSQL', () => {
		process.env.DATABASE_URL = 'mysql://localhost/x';
		resetConfig();
		expect(() => config()).toThrow(/DATABASE_URL must start with postgres/);
	});

	it('defaults SMTP to the local mail sink', () => {
		process.env.DATABASE_URL = 'postgres://u:p@127.0.0.1:5432/db';
		delete process.env.SMTP_URL;
		resetConfig();
		expect(config().SMTP_URL).toBe('smtp://127.0.0.1:4825');
	});
});

describe('stack settings', () => {
	it('uses our own default ports', () => {
		for (const k of ['MOMENTRY_PORT', 'MOMENTRY_PG_PORT', 'MOMENTRY_SMTP_PORT', 'MOMENTRY_MAIL_WEB_PORT']) delete process.env[k];
		const s = stackSettings();
		expect([s.appPort, s.pgPort, s.smtpPort, s.mailWebPort]).toEqual([4810, 54810, 4825, 4880]);
	});

	it('refuses a port that is not a number in range', () => {
		process.env.MOMENTRY_PG_PORT = '70000';
		expect(() => stackSettings()).toThrow('MOMENTRY_PG_PORT=70000 is not a TCP port (1–65535)');
	});
});
