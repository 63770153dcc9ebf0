// Shared steps for the end-to-end tests: the demo password, reading maildev's inbox, the two sign-in forms.
import { expect, type Page } from '@playwright/test';

export const PASSWORD = 'momentry-demo-2026';
const inbox = () => process.env.MAILDEV_URL!;

/** A message to `address` received after `since` (ms since epoch), whatever its subject; null if none arrives. */
export const mailTo = (address: string, since: number, timeoutMs = 15_000): Promise<{ text: string } | null> =>
	mailWith(address, /(?:)/, since, timeoutMs).catch(() => null);

/** The newest message to `address` whose subject matches, received after `since` (ms since epoch); throws if none. */
export async function mailWith(
	address: string,
	subject: RegExp,
	since: number,
	timeoutMs = 20_000
): Promise<{ text: string; subject: string }> {
	const deadline = Date.now() + timeoutMs;
	while (Date.now() < deadline) {
		const all = (await (await fetch(`${inbox()}/api/email`)).json()) as {
			to: { address: string }[];
			subject: string;
			text: string;
			time: string;
		}[];
		const hit = all
			.filter((m) => m.to.some((t) => t.address === address) && subject.test(m.subject) && new Date(m.time).getTime() >= since - 1000)
			.at(-1);
		if (hit) return hit;
		await new Promise((r) => setTimeout(r, 250));
	}
	throw new Error(`no e-mail to ${address} matching ${subject} arrived`);
}

/** Fills and submits the password form of /signin. */
export async function passwordSignIn(page: Page, email: string, password: string): Promise<void> {
	await page.goto('/signin');
	const form = page.locator('form', { has: page.getByRole('heading', { name: 'Sign in with a password' }) });
	await form.getByLabel('E-mail address').fill(email);
	await form.getByLabel('Password').fill(password);
	await form.getByRole('button', { name: 'Sign in' }).click();
}

/** Asks for an e-mailed sign-in link on /signin and waits for the "Check your e-mail" page. */
export async function askForSignInLink(page: Page, email: string): Promise<void> {
	await page.goto('/signin');
	const form = page.locator('form', { has: page.getByRole('heading', { name: 'E-mail me a sign-in link' }) });
	await form.getByLabel('E-mail address').fill(email);
	await form.getByRole('button', { name: 'Send link' }).click();
	await expect(page.getByRole('heading', { name: 'Check your e-mail' })).toBeVisible();
}

/** The demo technician signs in and opens the participants of the shelving-reach study. */
export async function technicianAtShelfReachParticipants(page: Page): Promise<void> {
	await passwordSignIn(page, 'technician@alder-creek.example', PASSWORD);
	await expect(page.getByTestId('signed-in-as')).toHaveText('Jonah Abernethy');
	await page.goto('/studies');
	await page.getByRole('link', { name: 'SHELF-REACH' }).first().click();
	await page.getByRole('link', { name: /^Participants/ }).click();
}
