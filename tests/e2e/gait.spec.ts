// Gait in Chromium: the administrator checks the demo lab's two force plates; the technician of WALK-3 drops a walk and
// its force file on a walking session, sees them stored as one trial with its force recording, starts a run, waits for
// the worker, and opens the results: the ground reaction force per plate and the gait-cycle mean ± SD of both feet
// (joint moments, left and right overlaid).
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { test, expect } from '@playwright/test';
import { PASSWORD, passwordSignIn } from './helpers';

const DIR = join(import.meta.dirname, '../../seeds/recordings');
const FORCES = readFileSync(join(DIR, 'wlk-002-walk-comfortable.forces.csv'), 'utf8');
/**
 * The demo walk of WLK-002 with its last digit changed (a millionth of a degree): the seed stored the file itself in
 * this session already, and the same bytes again would be refused as a duplicate.
 */
const ANGLES = (() => {
	const text = readFileSync(join(DIR, 'wlk-002-walk-comfortable.csv'), 'utf8').replace(/\n$/, '');
	return text.slice(0, -1) + (text.endsWith('1') ? '2' : '1') + '\n';
})();

test('a walk with its force file: stored, run, and its ground reaction forces and gait cycles shown', async ({ page }) => {
	test.setTimeout(120_000);

	// the administrator: the demo lab's two plates along the walkway
	await passwordSignIn(page, 'admin@alder-creek.example', PASSWORD);
	await expect(page.getByTestId('signed-in-as')).toHaveText('Rosa Lindqvist');
	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Force plates' }).click();
	await expect(page.getByRole('heading', { name: 'Force plates', level: 1 })).toBeVisible();
	await expect(page.getByTestId('plate-row-plate1')).toContainText('1 … 1.6');
	await expect(page.getByTestId('plate-row-plate2')).toContainText('1.6 … 2.2');
	await expect(page.getByTestId('floor-plate-plate1')).toBeVisible();
	await expect(page.getByTestId('floor-plate-plate2')).toBeVisible();
	await page.context().clearCookies();

	// the technician: WLK-002's walking session (both legs on the pelvis)
	await passwordSignIn(page, 'technician@alder-creek.example', PASSWORD);
	await expect(page.getByTestId('signed-in-as')).toHaveText('Jonah Abernethy');
	await page.goto('/studies');
	await page.getByRole('link', { name: 'WALK-3' }).first().click();
	await page.getByRole('link', { name: /^Participants/ }).click();
	await page.getByRole('link', { name: 'WLK-002', exact: true }).click();
	await page.getByRole('link', { name: '2026-11-26' }).click();
	await expect(page.getByRole('heading', { level: 1, name: /^Session of WLK-002 on / })).toBeVisible();

	// both files dropped at once: the force file pairs with the angle file by its name
	const dropped = await page.evaluateHandle(
		({ angles, forces }) => {
			const dt = new DataTransfer();
			dt.items.add(new File([angles], 'wlk-002-walk-e2e.csv', { type: 'text/csv' }));
			dt.items.add(new File([forces], 'wlk-002-walk-e2e.forces.csv', { type: 'text/csv' }));
			return dt;
		},
		{ angles: ANGLES, forces: FORCES }
	);
	await page.getByTestId('drop-zone').dispatchEvent('drop', { dataTransfer: dropped });
	const pairs = page.getByRole('region', { name: 'Force files and their angle files' });
	await expect(pairs).toContainText('wlk-002-walk-e2e.csv with force file wlk-002-walk-e2e.forces.csv');
	await expect(pairs.getByLabel('Angle file for force file wlk-002-walk-e2e.forces.csv')).toHaveValue('wlk-002-walk-e2e.csv');
	await pairs.getByRole('button', { name: 'Send 2 files' }).click();
	const items = page.getByTestId('upload-item');
	await expect(items.filter({ hasText: 'wlk-002-walk-e2e.csv' }).first().getByRole('status')).toContainText('stored', { timeout: 30_000 });
	await expect(page.getByTestId('trial-row').filter({ hasText: 'wlk-002-walk-e2e.csv' })).toHaveCount(1);

	// a run in the worker, followed to done, then its results page
	const runs = page.getByTestId('trial-runs').filter({ has: page.getByRole('heading', { name: 'Runs of wlk-002-walk-e2e.csv' }) });
	await runs.getByRole('button', { name: 'Start run' }).click();
	const run = runs.getByTestId('run').first();
	await expect(run).toHaveAttribute('data-state', 'done', { timeout: 60_000 });
	await run.getByRole('link', { name: /^Results of run/ }).click();

	// the ground reaction force of each plate
	const grf = page.getByTestId('grf-panel');
	await expect(grf.getByRole('heading', { name: 'Ground reaction force' })).toBeVisible({ timeout: 15_000 });
	await expect(grf.locator('[data-testid=grf-plate][data-plate=plate1]')).toBeVisible();
	await expect(grf.locator('[data-testid=grf-plate][data-plate=plate2]')).toBeVisible();

	// the gait cycles: mean ± SD of the left and the right foot, overlaid
	const cycles = page.getByTestId('gait-cycles');
	await expect(cycles.getByRole('heading', { name: 'Gait cycles' })).toBeVisible();
	// the joint moments over the cycles (the vertical force, shown first, needs a stance on a plate in every cycle)
	await cycles.getByTestId('gait-cycles-quantity').selectOption({ label: 'Joint moment' });
	const key = cycles.getByTestId('gait-cycles-key');
	await expect(key.locator('[data-foot=left]')).toContainText('Left');
	await expect(key.locator('[data-foot=right]')).toContainText('Right');
});
