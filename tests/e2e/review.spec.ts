// The review on the session page in Chromium: panels per DOF with their sign rule, the hatched edge-zone bands with
// their legend and note, the shared read-out, keyboard zoom and reset, the per-kg toggle, the "Include edge zones"
// switch kept in the URL, typed events saved and shown as repetitions with a peaks table, and a CSV export.
import { test, expect } from '@playwright/test';
import { PASSWORD, passwordSignIn } from './helpers';

test('review a session: read-out, zoom, per kg, edge zones, events and repetitions', async ({ page }, testInfo) => {
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

	// the run's edge zone: a hatched band at each end of every panel, named in the legend, explained under the plot
	const bands = panels.first().getByTestId('edge-zone-band');
	await expect(bands).toHaveCount(2);
	const bandBox = (await bands.first().boundingBox())!;
	expect(bandBox.width).toBeGreaterThan(1);
	await expect(bands.first().locator('title')).toHaveText(/^Edge zone: the first [\d.]+ s \(\d+ samples?\); results are not reliable here/);
	await expect(review.getByTestId('review-legend').first().getByTestId('edge-zone-legend')).toHaveText(/edge zone: results not reliable/);
	await expect(review.getByTestId('edge-zone-note')).toContainText('common practice');
	await panels.first().scrollIntoViewIfNeeded();
	const shot = testInfo.outputPath('review-edge-zones.png');
	await review.getByTestId('review-plot').first().screenshot({ path: shot });
	await testInfo.attach('review plot with edge zones', { path: shot, contentType: 'image/png' });

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
	await review
		.getByRole('group', { name: /Plot panels/ })
		.first()
		.focus();
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

	// the switch is a keyboard-reachable checkbox whose state is kept in the URL
	const sw = review.getByTestId('include-edge-zones');
	await sw.focus();
	await page.keyboard.press('Space');
	await expect(sw).toBeChecked();
	await expect.poll(() => new URL(page.url()).searchParams.get('includeEdgeZones')).toBe('1');
	await page.keyboard.press('Space');
	await expect(sw).not.toBeChecked();
	await expect.poll(() => new URL(page.url()).searchParams.get('includeEdgeZones')).toBeNull();

	// typed events → repetitions and the peaks table
	// (the first repetition starts on the first sample, inside the edge zone: left out, and the page says so)
	for (const t of ['0', '0.5', '1.5', '2.5']) {
		await review.getByTestId('event-new').fill(t);
		await review.getByTestId('event-new').press('Enter');
	}
	await expect(review.getByTestId('event-list').locator('li')).toHaveCount(4);
	await review.getByTestId('events-save').click();
	await expect(review.getByText('✓ 4 events saved.')).toBeVisible();
	await expect(review.getByTestId('repetitions-left-out')).toContainText(
		'1 of 3 repetitions (number 1) overlaps the edge zone of this run'
	);
	await expect(review.getByTestId('peaks-table')).toContainText('left out: overlaps the edge zone');
	await expect(review.getByTestId('peaks-table')).toContainText('mean ± SD (2 of 3)');
	await review.getByTestId('include-edge-zones').check();
	await expect(review.getByTestId('repetitions-left-out')).toHaveCount(0);
	await expect(review.getByTestId('peaks-table')).not.toContainText('(2 of 3)');
	await review.getByTestId('include-edge-zones').uncheck();
	await expect(review.getByTestId('peaks-table')).toContainText('mean ± SD');
	await expect(review.getByTestId('peaks-table')).toContainText('%');

	// CSV of the plotted data with units in the header
	const [download] = await Promise.all([
		page.waitForEvent('download'),
		review.getByRole('button', { name: '⇩ CSV (data)' }).first().click()
	]);
	const text = await (await download.createReadStream()).toArray();
	const csv = Buffer.concat(text as Buffer[]).toString('utf8');
	expect(csv.split('\n')[0]).toMatch(/^time \(s\),.*\(N·m\)/);
});
