/** Debian's Chromium driven by playwright-core (never a downloaded browser); playwright gives each launch a fresh profile. */
import { chromium, type Browser } from 'playwright-core';
import { baseUrl, latestMail, linkIn } from './session.js';

export async function launch(): Promise<{ browser: Browser; close: () => Promise<void> }> {
	const browser = await chromium.launch({
		executablePath: '/usr/bin/chromium',
		args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync']
	});
	return { browser, close: () => browser.close() };
}

/** Sign in the way a person does: ask for a link on the sign-in page, open it from the fake inbox. */
export async function signInThroughInbox(browser: Browser, email: string) {
	const context = await browser.newContext({ viewport: { width: 1400, height: 1000 } });
	const page = await context.newPage();
	await page.goto(`${baseUrl()}/`);
	await page.waitForURL(/\/signin/);
	const before = Date.now();
	await page.getByLabel('Work e-mail').fill(email);
	await page.getByRole('button', { name: 'E-mail me a sign-in link' }).click();
	await page.waitForURL(/\/signin\/check-email/);
	await page.goto(linkIn(await latestMail(email, before)));
	await page.waitForURL(/\/teams\/[^/]+\/projects/);
	return { context, page };
}
