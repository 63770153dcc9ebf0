// E-mailed consent in Chromium: a technician invites a participant, the participant consents from the e-mailed link
// (read from maildev's HTTP API), the state changes on the participant page; then the e-mailed withdraw link withdraws.
import { test, expect } from '@playwright/test';
import { mailWith, technicianAtShelfReachParticipants } from './helpers';

test('a technician invites, the participant consents from the e-mail, then withdraws with the e-mailed link', async ({ page, browser }) => {
	test.setTimeout(60_000);
	// a participant of our own, so other tests' demo participants keep their seeded states
	const email = `consent.e2e.${Date.now()}@example.org`;
	await technicianAtShelfReachParticipants(page);
	await page.getByRole('link', { name: 'Add participant' }).click();
	await page.locator('#field-sex').selectOption('female');
	await page.locator('#field-bodyMassKg').fill('63.5');
	await page.locator('#field-statureM').fill('1.70');
	await page.locator('#field-fullName').fill('Henrike Saltmarsh');
	await page.locator('#field-email').fill(email);
	await page.getByRole('button', { name: 'Add participant' }).click();
	await expect(page.getByTestId('consent-line').getByTestId('consent-state')).toHaveAttribute('data-state', 'not_invited');
	const participantUrl = page.url().split('?')[0];

	// send the invitation, confirming once
	await page.getByRole('link', { name: 'Consent history and invitations' }).click();
	await page.getByText('Send consent invitation…').click();
	const since = Date.now();
	await page.getByRole('button', { name: 'Yes, send consent invitation' }).click();
	await expect(page.getByTestId('consent-sent')).toContainText('Invitation sent');
	await expect(page.getByTestId('consent-state')).toHaveAttribute('data-state', 'invited');

	const invitation = await mailWith(email, /^Consent for the study SHELF-REACH/, since);
	expect(invitation.text).toContain('ACU-HREC-2026-041');
	const consentLink = invitation.text.match(/https?:\/\/\S+\/consent\/[A-Za-z0-9_-]{43}/)![0];

	// the participant, in a browser of their own and without an account
	const theirs = await browser.newContext();
	const p2 = await theirs.newPage();
	await p2.goto(consentLink);
	await expect(p2.getByRole('heading', { name: 'Overhead shelving reach in warehouse workers' })).toBeVisible();
	await expect(p2.getByTestId('consent-ethics-reference')).toHaveText('ACU-HREC-2026-041');
	await expect(p2.getByTestId('study-contact')).toContainText('pi@alder-creek.example');
	// without every confirmation ticked, nothing is recorded
	await p2.getByLabel('Your full name').fill('Henrike Saltmarsh');
	await p2.getByRole('button', { name: 'I agree' }).click();
	await expect(p2.locator('#confirm-0-error')).toBeVisible();
	for (const c of await p2.getByRole('checkbox').all()) await c.check();
	await p2.getByRole('button', { name: 'I agree' }).click();
	await expect(p2.getByTestId('consent-done')).toContainText('your consent is recorded');

	// the study team sees the change
	await page.goto(participantUrl);
	await expect(page.getByTestId('consent-line').getByTestId('consent-state')).toHaveAttribute('data-state', 'consented');
	await expect(page.getByTestId('consent-line')).toContainText('consented');

	// the confirmation e-mail: a copy of what was agreed and the withdraw link
	const copy = await mailWith(email, /^Your consent/, since);
	expect(copy.text).toContain('Signed (typed name): Henrike Saltmarsh');
	const withdrawLink = copy.text.match(/https?:\/\/\S+\/consent\/withdraw\/[A-Za-z0-9_-]{43}/)![0];
	await p2.goto(withdrawLink);
	await expect(p2.getByRole('heading', { name: 'Withdraw your consent' })).toBeVisible();
	await p2.getByRole('button', { name: 'Withdraw my consent' }).click();
	await expect(p2.getByTestId('withdraw-done')).toContainText('Your consent is withdrawn');
	await theirs.close();

	await page.goto(participantUrl);
	await expect(page.getByTestId('consent-line').getByTestId('consent-state')).toHaveAttribute('data-state', 'withdrawn');
	await expect(page.getByTestId('consent-line')).toContainText('withdrawn');
	await page.getByRole('link', { name: 'Consent history and invitations' }).click();
	await expect(page.getByTestId('consent-event')).toHaveCount(3);
});
