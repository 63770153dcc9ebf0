// Trial upload in Chromium: a new session, two files dropped at once on the drop zone with the upload throttled so
// that each file's own progress bar is seen part-way, one file stored and one rejected with its row and column,
// then a run started in the browser, processed by the worker, and its moment curves drawn on the session page.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { test, expect } from '@playwright/test';
import { technicianAtShelfReachParticipants } from './helpers';

const GOOD = readFileSync(join(import.meta.dirname, '../../seeds/recordings/ald-001-shelf-reach.csv'), 'utf8');

test('drop two files, watch each upload, see one stored and one rejected, then run it', async ({ page }) => {
	test.setTimeout(90_000);
	await technicianAtShelfReachParticipants(page);
	await page.getByRole('link', { name: 'ALD-002', exact: true }).click();
	await page.getByRole('link', { name: 'New session' }).click();
	await page.getByLabel('Operator').fill('E2E operator');
	await page.getByLabel('Task').fill('Reach to the top shelf, right arm (browser test)');
	await page.getByTestId('limb-right.arm').check();
	for (const limb of ['left.arm', 'right.leg', 'left.leg']) await page.getByTestId(`limb-${limb}`).uncheck();
	await page.getByRole('button', { name: 'Create session' }).click();
	await expect(page.getByRole('heading', { level: 1, name: /^Session of ALD-002 on / })).toBeVisible();

	// a bad file: the time of line 5 repeats line 4's
	const lines = GOOD.split('\n');
	lines[4] = lines[3];
	const bad = lines.join('\n');

	// 64 KB/s upstream: the 75 KB recording takes about a second, long enough to see its bar part-way
	const cdp = await page.context().newCDPSession(page);
	await cdp.send('Network.enable');
	await cdp.send('Network.emulateNetworkConditions', { offline: false, latency: 0, downloadThroughput: -1, uploadThroughput: 64 * 1024 });
	const dropped = await page.evaluateHandle(
		({ good, bad }) => {
			const dt = new DataTransfer();
			dt.items.add(new File([good], 'ald-002-shelf-reach.csv', { type: 'text/csv' }));
			dt.items.add(new File([bad], 'ald-002-repeated-frame.csv', { type: 'text/csv' }));
			return dt;
		},
		{ good: GOOD, bad }
	);
	await page.getByTestId('drop-zone').dispatchEvent('drop', { dataTransfer: dropped });
	const items = page.getByTestId('upload-item');
	await expect(items).toHaveCount(2);
	// each file has its own bar; at least one is seen between the start and the end
	const partWay = await page.waitForFunction(
		() =>
			Array.from(document.querySelectorAll<HTMLProgressElement>('[data-testid=upload-item] progress')).some(
				(p) => p.value > 0 && p.value < 100
			),
		undefined,
		{ timeout: 15_000, polling: 20 }
	);
	expect(await partWay.jsonValue()).toBe(true);
	await cdp.send('Network.emulateNetworkConditions', { offline: false, latency: 0, downloadThroughput: -1, uploadThroughput: -1 });

	const good = items.filter({ hasText: 'ald-002-shelf-reach.csv' });
	const rejected = items.filter({ hasText: 'ald-002-repeated-frame.csv' });
	await expect(good.getByRole('status')).toContainText('stored');
	await expect(good.getByRole('status')).toContainText('samples at 200 Hz');
	await expect(rejected.getByRole('alert')).toContainText('rejected');
	await expect(rejected.getByTestId('upload-problems')).toContainText('row 5, column “time (s)”');
	await expect(rejected.getByTestId('upload-problems')).toContainText('time-not-increasing');

	// only the good file became a trial; dropping it again is recognised as a duplicate
	const trials = page.getByTestId('trial-row');
	await expect(trials).toHaveCount(1);
	await expect(trials.first()).toContainText('ald-002-shelf-reach.csv');
	const again = await page.evaluateHandle((good) => {
		const dt = new DataTransfer();
		dt.items.add(new File([good], 'copy-of-reach.csv', { type: 'text/csv' }));
		return dt;
	}, GOOD);
	await page.getByTestId('drop-zone').dispatchEvent('drop', { dataTransfer: again });
	await expect(items.filter({ hasText: 'copy-of-reach.csv' }).getByRole('alert')).toContainText('already uploaded');
	await expect(trials).toHaveCount(1);

	// a run in the worker, followed live to done, then the moment curves on the session page
	await page.getByTestId('trial-runs').getByRole('button', { name: 'Start run' }).click();
	const run = page.getByTestId('run').first();
	await expect(run).toHaveAttribute('data-state', 'done', { timeout: 45_000 });
	await page.reload();
	const panels = page.getByTestId('moment-panel');
	await expect(panels.first()).toBeVisible();
	await expect(page.locator('[data-testid=moment-panel][data-dof="right.elbow.flexion"]')).toBeVisible();
});
