// Participant CSV import in Chromium with JavaScript: a too-large file is refused before sending, a bad file lists its
// problems by row and column, a good file (CRLF, a value over two lines) is previewed and imported with consecutive codes.
import { test, expect } from '@playwright/test';
import { technicianAtShelfReachParticipants } from './helpers';

test('check a file, see its problems or its preview, then import it', async ({ page }) => {
	test.setTimeout(60_000);
	await technicianAtShelfReachParticipants(page);
	await page.getByRole('link', { name: 'Import from CSV' }).click();
	await expect(page.getByRole('heading', { level: 1, name: 'Import participants from CSV' })).toBeVisible();
	const file = page.getByLabel('Participant list (.csv, .tsv or .txt)');
	const checkButton = page.getByRole('button', { name: 'Check file' });

	// refused in the browser, before anything is sent
	await file.setInputFiles({ name: 'huge.csv', mimeType: 'text/csv', buffer: Buffer.alloc(500 * 1024, 'a') });
	await checkButton.click();
	await expect(page.getByTestId('import-message')).toContainText('huge.csv is 500 KB; the limit is 400 KB');

	await file.setInputFiles({
		name: 'bad.csv',
		mimeType: 'text/csv',
		buffer: Buffer.from('sex,body_mass_kg,stature_m\nfemale,61,1.65\nmale,7,1.8\n')
	});
	await checkButton.click();
	await expect(page.getByTestId('import-problems')).toContainText(
		'row 3, column body_mass_kg: body mass must be between 20 and 300 kg (got 7 kg)'
	);
	await expect(page.getByRole('button', { name: /^Import \d+ participant/ })).toHaveCount(0);

	const good =
		'sex,body_mass_kg,stature_m,notes,full_name\r\nfemale,61,1.65,"first line\r\nsecond line",Ottilie Brennagh\r\nmale,83.5,1.84,,Casimir Wendlebury\r\n';
	await file.setInputFiles({ name: 'good.csv', mimeType: 'text/csv', buffer: Buffer.from(good) });
	await checkButton.click();
	const rows = page.getByTestId('preview-row');
	await expect(rows).toHaveCount(2);
	await expect(rows.nth(0)).toContainText('✓ ready');
	// the value over two lines keeps the next participant on row 4
	await expect(rows.nth(1).locator('td').first()).toHaveText('4');
	const first = (await rows.nth(0).locator('td').nth(1).textContent())!.trim();
	const second = (await rows.nth(1).locator('td').nth(1).textContent())!.trim();
	expect(Number(second.slice(4))).toBe(Number(first.slice(4)) + 1);

	// the checked text goes back through the browser's form encoding and must still match its SHA-256
	await page.getByRole('button', { name: 'Import 2 participants' }).click();
	await expect(page).toHaveURL(/\/participants\?imported=2/);
	await expect(page.getByTestId('imported')).toHaveText(`✓ 2 participants imported: ${first} to ${second}.`);
	await page.getByRole('link', { name: first, exact: true }).click();
	await expect(page.getByText('Ottilie Brennagh')).toBeVisible();
	await expect(page.getByText('first line')).toContainText('second line');
});
