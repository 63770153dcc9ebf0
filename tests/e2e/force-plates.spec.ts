// Force plates in Chromium: a lab administrator opens the plates from the navigation, sees the demo lab's two plates in
// the floor drawing and the table, is told what is wrong with a corner that breaks the rectangle, and sets up a plate.
import { test, expect } from '@playwright/test';
import { PASSWORD, passwordSignIn } from './helpers';

test('an administrator sets up a force plate and sees it in the floor drawing and the table', async ({ page }) => {
	const name = `walk${Date.now() % 1_000_000}`;
	await passwordSignIn(page, 'admin@alder-creek.example', PASSWORD);
	await expect(page.getByTestId('signed-in-as')).toHaveText('Rosa Lindqvist');
	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Force plates' }).click();
	await expect(page.getByRole('heading', { name: 'Force plates', level: 1 })).toBeVisible();

	// the seeded plates, side by side along the walkway
	for (const plate of ['plate1', 'plate2']) {
		await expect(page.getByTestId(`floor-plate-${plate}`)).toBeVisible();
		await expect(page.getByTestId(`plate-row-${plate}`)).toBeVisible();
	}
	await expect(page.getByTestId('plate-row-plate1')).toContainText('1 … 1.6');

	// the new-plate form starts as a 0.6 m × 0.4 m plate centred on the lab origin
	const form = page.locator('#plate-form');
	await expect(form.getByRole('heading', { name: 'Add a plate' })).toBeVisible();
	await form.getByLabel('Name').fill(name);
	await expect(form.getByRole('group', { name: 'Corner 3' }).getByLabel('X')).toHaveValue('0.3');

	// corner 3 moved out of line: the corners are no rectangle, and nothing is saved
	await form.getByRole('group', { name: 'Corner 3' }).getByLabel('X').fill('0.45');
	await form.getByLabel('Origin depth (mm)').fill('38');
	await form.getByRole('button', { name: 'Add plate' }).click();
	await expect(page.getByTestId('error-corners')).toContainText('not a rectangle');
	await expect(page.getByText('Nothing was saved.')).toBeVisible();
	await expect(page.getByTestId(`plate-row-${name}`)).toHaveCount(0);
	// what was typed is kept
	await expect(form.getByLabel('Name')).toHaveValue(name);
	await expect(form.getByLabel('Origin depth (mm)')).toHaveValue('38');

	await form.getByRole('group', { name: 'Corner 3' }).getByLabel('X').fill('0.3');
	await form.getByRole('button', { name: 'Add plate' }).click();
	await expect(page.getByText(`Plate ${name} set up.`)).toBeVisible();
	await expect(page.getByTestId(`floor-plate-${name}`)).toBeVisible();
	const row = page.getByTestId(`plate-row-${name}`);
	await expect(row).toContainText('-0.3 … 0.3');
	await expect(row).toContainText('38');

	// the plate in the drawing is a link to its edit form, reached with the keyboard
	await page.getByTestId(`floor-plate-${name}`).focus();
	await page.keyboard.press('Enter');
	await expect(page.getByRole('heading', { name: `Edit plate ${name}` })).toBeVisible();
});
