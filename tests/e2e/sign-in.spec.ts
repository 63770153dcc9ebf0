// Signing in and out in Chromium: password, e-mailed link read from maildev's HTTP API, and the failure messages.
import { test, expect } from '@playwright/test';
import { PASSWORD, askForSignInLink, mailTo, passwordSignIn } from './helpers';

test('sign in with a password, then sign out', async ({ page }) => {
	await passwordSignIn(page, 'pi@alder-creek.example', PASSWORD);
	await expect(page.getByTestId('signed-in-as')).toHaveText('Tomasz Okafor');
	const cookies = await page.context().cookies();
	const session = cookies.find((c) => c.name.includes('authjs.session-token'));
	expect(session?.httpOnly).toBe(true);
	await page.getByRole('button', { name: 'Sign out' }).click();
	await expect(page.getByRole('link', { name: 'Sign in' })).toBeVisible();
	await expect(page.getByTestId('signed-in-as')).toHaveCount(0);
});

test('a wrong password is refused without saying whether the account exists', async ({ page }) => {
	await passwordSignIn(page, 'technician@alder-creek.example', 'not the password');
	const known = await page.getByRole('alert').textContent();
	await passwordSignIn(page, 'nobody@alder-creek.example', 'not the password');
	const unknown = await page.getByRole('alert').textContent();
	expect(known).toContain('do not match an account that can sign in');
	expect(unknown).toBe(known);
});

test('sign in through the e-mailed link, which works only once', async ({ page, browser }) => {
	const since = Date.now();
	await askForSignInLink(page, 'researcher@alder-creek.example');
	const mail = await mailTo('researcher@alder-creek.example', since);
	expect(mail).not.toBeNull();
	const link = mail!.text.match(/https?:\/\/\S+/)![0];
	expect(new URL(link).hostname).toBe('127.0.0.1');
	await page.goto(link);
	await expect(page.getByTestId('signed-in-as')).toHaveText('Mei Haraldsen');

	// the same link again, in a fresh browser: refused as used
	const other = await browser.newContext();
	const p2 = await other.newPage();
	await p2.goto(link);
	await expect(p2.getByRole('alert')).toContainText('expired or has already been used');
	await other.close();
});

test('asking a link for an unknown address looks the same and sends nothing', async ({ page }) => {
	const since = Date.now();
	await askForSignInLink(page, 'stranger@alder-creek.example');
	expect(await mailTo('stranger@alder-creek.example', since, 2_000)).toBeNull();
});
