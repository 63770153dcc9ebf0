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

test('a gait session from the form, a force file paired with its angle file in the upload area, the force options of a new run', async ({
	page
}) => {
	test.setTimeout(90_000);
	await technicianAtShelfReachParticipants(page);
	await page.getByRole('link', { name: 'ALD-002', exact: true }).click();
	await page.getByRole('link', { name: 'New session' }).click();
	await page.getByLabel('Operator').fill('E2E operator');
	await page.getByLabel('Task').fill('Level walking over the plates (browser test)');
	await page.getByRole('radio', { name: /Both legs on one moving pelvis/ }).check();
	const pelvis = page.getByTestId('pelvis-setup');
	await expect(pelvis).toContainText('pelvis.px');
	await expect(pelvis).toContainText('Entering the measured distance is better');
	// arms are not part of a pelvis set-up; the legs take no base of their own
	await expect(page.getByTestId('limb-right.arm')).toBeDisabled();
	await expect(page.getByLabel('Base', { exact: true })).toHaveCount(0);
	await page.getByLabel(/Distance between the hip joint centres/).fill('180');
	for (const limb of ['right.leg', 'left.leg']) await page.getByTestId(`limb-${limb}`).check();
	await page.getByRole('button', { name: 'Create session' }).click();
	await expect(page.getByRole('heading', { level: 1, name: /^Session of ALD-002 on / })).toBeVisible();
	await expect(page.getByTestId('setup-pelvis')).toContainText('180 mm apart (entered)');

	// an angle file with the columns the session lists (pelvis and both legs), 40 samples at 200 Hz as the force sample's 196 at 1000 Hz
	const columns = (await page.getByTestId('session-setup').locator('details li code').allTextContents()).filter((c) => c !== 'time (s)');
	expect(columns).toContain('pelvis.px');
	const value = (c: string, t: number) =>
		c === 'pelvis.px'
			? (1.2 + 1.2 * t).toFixed(4)
			: c === 'pelvis.py'
				? '0.9500'
				: c.startsWith('pelvis.')
					? '0.0000'
					: (5 + 10 * t).toFixed(3);
	const rows = [['time (s)', ...columns.map((c) => `${c} (${c.startsWith('pelvis.p') ? 'm' : 'deg'})`)].join(',')];
	for (let k = 0; k < 40; k++) rows.push([(k / 200).toFixed(3), ...columns.map((c) => value(c, k / 200))].join(','));
	const forces = readFileSync(join(import.meta.dirname, '../fixtures/recordings/forces/walk-forces-1000hz.csv'));

	// the force file's name does not give its angle file: the upload area asks for it
	await page.locator('#upload-files').setInputFiles([
		{ name: 'e2e-walk.csv', mimeType: 'text/csv', buffer: Buffer.from(rows.join('\n') + '\n') },
		{ name: 'e2e-plates.csv', mimeType: 'text/csv', buffer: forces }
	]);
	await page.getByTestId('upload-area').getByRole('button', { name: 'Upload', exact: true }).click();
	const pairing = page.getByTestId('pairing');
	await expect(pairing.getByTestId('pairing-problems')).toContainText('Choose the angle file of the force file e2e-plates.csv');
	const send = pairing.getByRole('button', { name: /^Send 2 files$/ });
	await expect(send).toBeDisabled();
	// by keyboard: the select of the force file, then the send button
	const choose = pairing.getByLabel('Angle file for force file e2e-plates.csv');
	await choose.focus();
	await choose.selectOption('e2e-walk.csv');
	await expect(pairing.getByTestId('pairing-angle')).toContainText('with force file e2e-plates.csv');
	await send.focus();
	await page.keyboard.press('Enter');

	const items = page.getByTestId('upload-item');
	const angle = items.filter({ hasText: 'e2e-walk.csv' }).filter({ hasNotText: 'Force file of' });
	const force = items.filter({ hasText: 'Force file of e2e-walk.csv' });
	await expect(angle.getByRole('status')).toContainText('stored');
	await expect(angle.getByTestId('upload-paired')).toContainText('With its force file e2e-plates.csv');
	await expect(force.getByRole('status')).toContainText('stored with e2e-walk.csv as its force recording');
	await expect(page.getByTestId('trial-row')).toHaveCount(1);

	// the new run form of a trial with forces offers the force cutoff and flagged contacts
	const options = page.getByTestId('trial-runs').getByTestId('force-options');
	await expect(options).toContainText('plate1, plate2 in e2e-plates.csv');
	await expect(options.getByRole('radio', { name: /Same cutoff as the angles/ })).toBeChecked();
	await expect(options.getByRole('checkbox', { name: /Use flagged contacts/ })).not.toBeChecked();
});
