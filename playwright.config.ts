// Playwright: end-to-end tests in Debian's Chromium against the built app (started here on loopback).
import { defineConfig } from '@playwright/test';

const port = Number(process.env.E2E_PORT ?? 4819);

export default defineConfig({
	testDir: 'tests/e2e',
	fullyParallel: false,
	workers: 1,
	retries: 0,
	timeout: 30_000,
	outputDir: '.test-artifacts/playwright',
	// the job worker, so that runs started in the browser are processed (stopped by the function it returns)
	globalSetup: './tests/e2e/global-setup.ts',
	use: {
		baseURL: `http://127.0.0.1:${port}`,
		browserName: 'chromium',
		headless: true,
		launchOptions: {
			executablePath: '/usr/bin/chromium',
			args: [
				'--no-sandbox',
				'--disable-gpu',
				'--disable-quic',
				'--no-first-run',
				'--disable-background-networking',
				'--disable-component-update',
				'--disable-sync'
			]
		},
		trace: 'retain-on-failure'
	},
	webServer: {
		command: `node ${process.env.MOMENTRY_BUILD_DIR ?? 'build'}/index.js`,
		url: `http://127.0.0.1:${port}/api/health`,
		reuseExistingServer: false,
		timeout: 60_000,
		env: {
			...(process.env as Record<string, string>),
			HOST: '127.0.0.1',
			PORT: String(port),
			ORIGIN: `http://127.0.0.1:${port}`,
			BODY_SIZE_LIMIT: 'Infinity'
		}
	}
});
