// Review and approval in Chromium on the KNEE-60 demo session: the moment panel draws its axis ticks and curve (DOM
// and a screenshot kept as an artifact); the researcher submits; the PI's e-mail arrives in maildev with the link;
// the PI's work queue lists the session; a wrong password is refused; the PI signs; the researcher's e-mail arrives;
// the export downloads and its results.csv and provenance.json hold the expected rows and hashes.
import { test, expect, type Page } from '@playwright/test';
import { execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { PASSWORD, mailWith, passwordSignIn } from './helpers';

const RESEARCHER = 'knee.researcher@alder-creek.example';
const PI = 'pi@alder-creek.example';

async function openKneeSession(page: Page): Promise<string> {
	await page.goto('/studies');
	await page.getByRole('link', { name: 'KNEE-60' }).first().click();
	await page.getByRole('link', { name: /^Participants/ }).click();
	await page.getByRole('link', { name: 'KNE-001', exact: true }).click();
	await page.locator('a[href*="/sessions/"]').first().click();
	await expect(page.getByTestId('session-workflow')).toBeVisible();
	return new URL(page.url()).pathname;
}

test('researcher submits, the PI signs from the e-mailed link, the export holds the rows and hashes', async ({
	page,
	browser
}, testInfo) => {
	test.setTimeout(120_000);
	await passwordSignIn(page, RESEARCHER, PASSWORD);
	await expect(page.getByTestId('signed-in-as')).toHaveText('Priya Castellano');
	const sessionPath = await openKneeSession(page);

	// the moment panel of the demo data: d3's ticks with numbers, and a curve of many points
	const panel = page.getByTestId('session-review').locator('[data-testid="review-panel"][data-dof="right.knee.flexion"]');
	await expect(panel).toBeVisible({ timeout: 20_000 });
	await expect(panel).toHaveAttribute('aria-label', /^right knee flexion moment \(N·m\), \+ = /);
	const yTicks = await panel.locator(':scope > g').nth(1).locator('.tick text').allTextContents();
	const xTicks = await panel.locator(':scope > g').nth(0).locator('.tick text').allTextContents();
	expect(yTicks.length).toBeGreaterThan(3);
	expect(xTicks.length).toBeGreaterThan(3);
	for (const t of [...xTicks, ...yTicks]) expect(Number(t.replace('−', '-').replace(/,/g, ''))).not.toBeNaN();
	const d = (await panel.locator('path[stroke-width="1.6"]').first().getAttribute('d')) ?? '';
	expect(d.split('L').length).toBeGreaterThan(100);
	await panel.scrollIntoViewIfNeeded();
	const shot = testInfo.outputPath('knee-moment-panel.png');
	await panel.screenshot({ path: shot });
	await testInfo.attach('knee moment panel', { path: shot, contentType: 'image/png' });
	expect(fs.statSync(shot).size).toBeGreaterThan(5_000);

	// submit for review with a summary
	const workflow = page.getByTestId('session-workflow');
	await workflow.getByText('Submit for review…').click();
	await workflow.getByLabel(/Summary for the PI/).fill('Two extensions recorded against the ankle weight; nothing unusual.');
	await workflow.getByRole('checkbox').check();
	let since = Date.now();
	await workflow.getByRole('button', { name: 'Submit for review' }).click();
	await expect(page.getByTestId('workflow-state')).toContainText('In review');

	// the PI's e-mail, with the link to the session
	const forPi = await mailWith(PI, /^For your approval: KNEE-60 KNE-001/, since);
	expect(forPi.text).toContain('Two extensions recorded against the ankle weight');
	const link = forPi.text.match(/https?:\/\/\S+\/studies\/\S+\/sessions\/[0-9a-f-]{36}/)![0];
	expect(new URL(link).pathname).toBe(sessionPath);

	// the PI, in a browser of their own: the work queue counts it, the e-mailed link opens it
	const theirs = await browser.newContext();
	const pi = await theirs.newPage();
	await passwordSignIn(pi, PI, PASSWORD);
	await pi.goto('/');
	await expect(pi.getByTestId('queue-approve')).toContainText('KNE-001');
	await pi.goto(link);
	await expect(pi.getByTestId('workflow-state')).toContainText('In review');
	const piFlow = pi.getByTestId('session-workflow');
	await piFlow.getByText('Approve and sign…').click();

	// a wrong password is refused and nothing changes
	await piFlow.getByRole('checkbox').check();
	await piFlow.getByLabel(/Your password/).fill('not-the-password');
	await piFlow.getByRole('button', { name: 'Sign and approve' }).click();
	await expect(pi.locator('#wf-password-err')).toBeVisible();
	await expect(pi.getByTestId('workflow-state')).toContainText('In review');

	// the right one signs
	await piFlow.getByRole('checkbox').check();
	await piFlow.getByLabel(/Your password/).fill(PASSWORD);
	since = Date.now();
	await piFlow.getByRole('button', { name: 'Sign and approve' }).click();
	await expect(pi.getByTestId('workflow-state')).toContainText('Approved and locked');
	await expect(pi.getByTestId('locked-banner')).toContainText('Signed by Tomasz Okafor');
	await expect(pi.getByTestId('locked-banner')).toContainText('“approved for analysis”');
	await expect(pi.getByTestId('workflow-history')).toContainText('signed as “approved for analysis” (password re-entered)');

	// the researcher's e-mail
	const forResearcher = await mailWith(RESEARCHER, /^Approved: KNEE-60 KNE-001/, since);
	expect(forResearcher.text).toContain('approved for analysis');
	expect(forResearcher.text).toContain(link);

	// the researcher downloads the export
	await page.goto(sessionPath);
	await expect(page.getByTestId('locked-banner')).toBeVisible();
	const [download] = await Promise.all([page.waitForEvent('download'), page.getByTestId('export-link').click()]);
	expect(download.suggestedFilename()).toBe('KNEE-60-KNE-001-2026-11-20-session.zip');
	const dir = testInfo.outputPath('export');
	fs.mkdirSync(dir, { recursive: true });
	const zip = path.join(dir, 'session.zip');
	await download.saveAs(zip);
	// python's zipfile checks every entry's CRC while extracting
	execFileSync('/usr/bin/python3', ['-m', 'zipfile', '-e', zip, path.join(dir, 'x')]);

	const prov = JSON.parse(fs.readFileSync(path.join(dir, 'x', 'provenance.json'), 'utf8'));
	expect(prov.participant).toEqual({ code: 'KNE-001' });
	expect(prov.study.code).toBe('KNEE-60');
	expect(prov.approval).toMatchObject({ approverName: 'Tomasz Okafor', meaning: 'approved for analysis' });
	expect(prov.trials).toHaveLength(1);
	const trial = prov.trials[0];
	const raw = fs.readFileSync(path.join(dir, 'x', trial.archivePath));
	// the raw file in the archive is the demo recording byte for byte, and its hash is the one recorded
	const seeded = fs.readFileSync('seeds/recordings/kne-001-seated-knee-extension.csv');
	expect(createHash('sha256').update(raw).digest('hex')).toBe(trial.rawSha256);
	expect(createHash('sha256').update(seeded).digest('hex')).toBe(trial.rawSha256);
	expect(trial.run.rawSha256).toBe(trial.rawSha256);

	const csv = fs
		.readFileSync(path.join(dir, 'x', 'results.csv'), 'utf8')
		.trimEnd()
		.split('\n');
	expect(csv[0]).toBe('participant,trial,run,dof,quantity,unit,axis,repetition,x,value,in_edge_zone');
	const moments = csv.filter((l) => /^KNE-001,[^,]+,1,right\.knee\.[^,]+,moment,N·m,time_s,,/.test(l));
	expect(moments.length).toBe(trial.frames);
	const first = moments[0].split(',');
	expect(Number(first[8])).toBe(0);
	expect(Number.isFinite(Number(first[9]))).toBe(true);
	expect(csv.some((l) => l.includes(',angle,rad,time_s,,'))).toBe(true);
	// never a participant's name or e-mail address
	const text = fs.readFileSync(path.join(dir, 'x', 'results.csv'), 'utf8') + JSON.stringify(prov);
	expect(text).not.toMatch(/@/);
	await theirs.close();
});
