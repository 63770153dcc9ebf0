// The app shell in Chromium: product name, demo lab, bundled Source Sans 3, no request leaving 127.0.0.1.
import { test, expect } from '@playwright/test';

test('home page renders with the product name and the bundled font, all from loopback', async ({ page, baseURL }) => {
	const outside: string[] = [];
	page.on('request', (req) => {
		const url = new URL(req.url());
		if (!['http:', 'https:', 'ws:', 'wss:'].includes(url.protocol)) return; // data: and blob: stay in the page
		if (url.hostname !== '127.0.0.1') outside.push(req.url());
	});
	const fontFiles: string[] = [];
	page.on('response', (res) => {
		if (/\.woff2?($|\?)/.test(res.url()) && res.ok()) fontFiles.push(res.url());
	});

	await page.goto('/');
	await expect(page.getByRole('heading', { level: 1, name: 'Momentry' })).toBeVisible();
	await expect(page).toHaveTitle('Momentry');
	await expect(page.getByTestId('lab-name')).toHaveText('Alder Creek Movement Laboratory');
	await expect(page.getByLabel('Research use only').first()).toContainText('not a clinical diagnosis');

	const family = await page.evaluate(() => getComputedStyle(document.body).fontFamily);
	expect(family.split(',')[0].replace(/["']/g, '').trim()).toBe('Source Sans 3');
	const loaded = await page.evaluate(async () => {
		await document.fonts.ready;
		return (
			document.fonts.check('16px "Source Sans 3"') &&
			[...document.fonts].some((f) => f.family.replace(/"/g, '') === 'Source Sans 3' && f.status === 'loaded')
		);
	});
	expect(loaded).toBe(true);
	expect(fontFiles.length).toBeGreaterThan(0);
	for (const f of fontFiles) expect(f.startsWith(baseURL!)).toBe(true);
	expect(outside).toEqual([]);
});

test('unknown pages show the friendly error page', async ({ page }) => {
	const res = await page.goto('/no-such-page');
	expect(res?.status()).toBe(404);
	await expect(page.getByRole('heading', { name: 'We could not find that page' })).toBeVisible();
	await expect(page.getByRole('link', { name: 'Back to the overview' })).toBeVisible();
});

test('the theme switch toggles dark mode and remembers it', async ({ page }) => {
	await page.goto('/');
	const html = page.locator('html');
	const wasDark = (await html.getAttribute('class'))?.includes('dark') ?? false;
	await page.getByRole('button', { name: wasDark ? 'Light' : 'Dark' }).click();
	await expect(html).toHaveClass(wasDark ? /^(?!.*dark)/ : /dark/);
	await page.reload();
	await expect(html).toHaveClass(wasDark ? /^(?!.*dark)/ : /dark/);
});

test('status page reports the database by word, and keyboard users can skip to content', async ({ page }) => {
	await page.goto('/status');
	await expect(page.getByTestId('db-status')).toContainText('Database: reachable');
	await page.keyboard.press('Tab');
	await expect(page.getByRole('link', { name: 'Skip to content' })).toBeFocused();
});
