// The account page in Chromium: sign in with a password, see one's roles, sign out everywhere and land signed out.
import { test, expect } from '@playwright/test';
import { PASSWORD, passwordSignIn } from './helpers';

test('open Account after a password sign-in, then sign out everywhere', async ({ page }) => {
	await passwordSignIn(page, 'pi@alder-creek.example', PASSWORD);
	await expect(page.getByTestId('signed-in-as')).toHaveText('Tomasz Okafor');

	await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Account', exact: true }).click();
	await expect(page).toHaveURL(/\/account$/);
	await expect(page.getByRole('heading', { level: 1, name: 'Account' })).toBeVisible();
	await expect(page.getByTestId('account-email')).toHaveText('pi@alder-creek.example');
	await expect(page.getByTestId('account-role')).toHaveCount(3); // SHELF-REACH, KNEE-60 and WALK-3 of the demo
	await expect(page.getByTestId('account-role').filter({ hasText: 'SHELF-REACH' })).toContainText('Principal investigator');

	const everywhere = page.locator('form', { has: page.getByRole('heading', { name: 'Sign out everywhere' }) });
	await expect(everywhere).toContainText('Ends every session of your account');
	await everywhere.getByRole('button', { name: 'Sign out everywhere', exact: true }).click();

	await expect(page.getByRole('link', { name: 'Sign in', exact: true })).toBeVisible();
	await expect(page.getByTestId('signed-in-as')).toHaveCount(0);
	await expect(page.getByRole('link', { name: 'Account', exact: true })).toHaveCount(0);

	// the account page now asks for sign-in
	await page.goto('/account');
	await expect(page).toHaveURL(/\/signin\?next=%2Faccount$/);
});
