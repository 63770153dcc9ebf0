// Inviting a person in Chromium: the administrator invites from the UI, the invitee opens the e-mailed link
// (read from maildev's HTTP API), chooses a password and signs in with it.
import { test, expect } from '@playwright/test';
import { PASSWORD, mailTo, passwordSignIn } from './helpers';

test('an administrator invites a person, who sets a password from the e-mailed link and signs in', async ({ page, browser }) => {
	const email = `new.colleague.${Date.now()}@alder-creek.example`;
	const chosen = 'seven birch canoes drifting';

	await passwordSignIn(page, 'admin@alder-creek.example', PASSWORD);
	await expect(page.getByTestId('signed-in-as')).toHaveText('Rosa Lindqvist');
	await page.goto('/people');
	await expect(page.getByTestId('people-table')).toContainText('Tomasz Okafor');
	await page.getByRole('main').getByRole('link', { name: 'Invite a person' }).click();
	await expect(page.getByRole('heading', { name: 'Invite a person' })).toBeVisible();

	// a wrong address is refused with a message that names the field and the fix
	await page.getByLabel('E-mail address').fill('new.colleague.at.alder-creek');
	await page.getByRole('button', { name: 'Send invitation' }).click();
	await expect(page.getByText('is not an e-mail address')).toBeVisible();

	await page.getByLabel('E-mail address').fill(email);
	await page.getByRole('textbox', { name: /^Name/ }).fill('Ada Kowalczyk');
	await page.getByLabel(/SHELF-REACH/).selectOption('technician');
	const since = Date.now();
	await page.getByRole('button', { name: 'Send invitation' }).click();
	await expect(page.getByText(`Invitation e-mailed to ${email}`)).toBeVisible();
	await expect(page.getByTestId('person-email')).toHaveText(email);

	const mail = await mailTo(email, since);
	expect(mail).not.toBeNull();
	const link = mail!.text.match(/https?:\/\/\S+\/invitation\/[A-Za-z0-9_-]+/)![0];

	// the invitee, in a browser of their own
	const theirs = await browser.newContext();
	const p2 = await theirs.newPage();
	await p2.goto(link);
	await expect(p2.getByTestId('invited-email')).toHaveText(email);
	await expect(p2.getByLabel('Your name')).toHaveValue('Ada Kowalczyk');
	await p2.getByLabel('New password', { exact: true }).fill(chosen);
	await p2.getByLabel('New password again').fill(chosen);
	await p2.getByRole('button', { name: 'Save and continue to sign-in' }).click();
	await expect(p2.getByTestId('signin-note')).toContainText('Your account is ready');

	await passwordSignIn(p2, email, chosen);
	await expect(p2.getByTestId('signed-in-as')).toHaveText('Ada Kowalczyk');

	// the link worked once
	await p2.goto(link);
	await expect(p2.getByText('This link has expired or has already been used')).toBeVisible();
	await theirs.close();

	// the administrator sees the person as active with their role
	await page.goto(`/people?q=${encodeURIComponent('kowalczyk')}`);
	const row = page.getByTestId('people-table').getByRole('row', { name: /Ada Kowalczyk/ });
	await expect(row).toContainText('SHELF-REACH: technician');
	await expect(row).toContainText('Active');
});

test('the people list is reachable by keyboard and sorts from its column headers', async ({ page }) => {
	await passwordSignIn(page, 'admin@alder-creek.example', PASSWORD);
	await expect(page.getByTestId('signed-in-as')).toHaveText('Rosa Lindqvist');
	await page.goto('/people');
	const header = page.getByRole('columnheader', { name: /E-mail/ });
	await header.getByRole('link').focus();
	await page.keyboard.press('Enter');
	await expect(page).toHaveURL(/sort=email/);
	await expect(page.getByRole('columnheader', { name: /E-mail/ })).toHaveAttribute('aria-sort', 'ascending');
	await page.getByLabel('Search by name or e-mail').fill('OKAFOR');
	await page.keyboard.press('Enter');
	await expect(page).toHaveURL(/q=OKAFOR/);
	await expect(page.getByTestId('people-table').getByRole('row')).toHaveCount(2);
	await page.getByLabel('Search by name or e-mail').fill('no such person anywhere');
	await page.keyboard.press('Enter');
	await expect(page.getByRole('heading', { name: /Nobody matches/ })).toBeVisible();
});
