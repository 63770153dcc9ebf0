// The review on the session page in Chromium: panels per DOF with their sign rule, the shared read-out, keyboard zoom
// and reset, the per-kg toggle, typed events saved and shown as repetitions with a peaks table, and a CSV export.
import { test, expect } from '@playwright/test';
import { PASSWORD, passwordSignIn } from './helpers';

test('review a session: read-out, zoom, per kg, events and repetitions', async ({ page }) => {
	test.setTimeout(60_000);
	await passwordSignIn(page, 'researcher@alder-creek.example', PASSWORD);
	await page.goto('/studies');
	await page.getByRole('link', { name: 'SHELF-REACH' }).first().click();
	await page.getByRole('link', { name: /^Participants/ }).click();
	await page.getByRole('link', { name: 'ALD-001', exact: true }).click();
	await page.locator('a[href*="/sessions/"]').first().click();

	const review = page.getByTestId('session-review');
	const panels = review.getByTestId('review-panel');
	await expect(panels.first()).toBeVisible({ timeout: 20_000 });
	await expect(panels.first()).toHaveAttribute('aria-label', /moment \(N·m\), \+ = /);
	// ticks drawn by d3-axis
	expect(await panels.first().locator('.tick').count()).toBeGreaterThan(3);

	// the shared cursor: one read-out for every panel
	await panels.first().scrollIntoViewIfNeeded();
	const box = (await panels.first().boundingBox())!;
	await page.mouse.move(box.x + box.width * 0.5, box.y + box.height * 0.4);
	const readout = review.getByTestId('review-readout').first();
	await expect(readout).toContainText(/time \d/);
	await expect(readout).toContainText('N·m');

	// keyboard zoom changes the x ticks; reset restores them
	const ticks = async () => (await panels.first().locator('g').nth(0).locator('.tick text').allTextContents()).join(' ');
	const before = await ticks();
	await review.getByRole('group', { name: /Plot panels/ }).first().focus();
	await page.keyboard.press('+');
	await page.keyboard.press('+');
	await expect.poll(ticks).not.toBe(before);
	await review.getByTestId('zoom-reset').first().click();
	await expect.poll(ticks).toBe(before);

	// per kg of body mass
	await review.getByTestId('per-kg').check();
	await expect(panels.first()).toHaveAttribute('aria-label', /N·m\/kg/);
	await review.getByTestId('per-kg').uncheck();
	await expect(panels.first()).toHaveAttribute('aria-label', /\(N·m\)/);

	// typed events → repetitions and the peaks table
	for (const t of ['0.5', '1.5', '2.5']) {
		await review.getByTestId('event-new').fill(t);
		await review.getByTestId('event-new').press('Enter');
	}
	await expect(review.getByTestId('event-list').locator('li')).toHaveCount(3);
	await review.getByTestId('events-save').click();
	await expect(review.getByText('✓ 3 events saved.')).toBeVisible();
	await expect(review.getByTestId('peaks-table')).toContainText('mean ± SD');
	await expect(review.getByTestId('peaks-table')).toContainText('%');

	// CSV of the plotted data with units in the header
	const [download] = await Promise.all([page.waitForEvent('download'), review.getByRole('button', { name: '⇩ CSV (data)' }).first().click()]);
	const text = await (await download.createReadStream()).toArray();
	const csv = Buffer.concat(text as Buffer[]).toString('utf8');
	expect(csv.split('\n')[0]).toMatch(/^time \(s\),.*\(N·m\)/);
});
