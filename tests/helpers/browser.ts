/** Debian's Chromium driven by playwright-core (never a downloaded browser); playwright gives each launch a fresh profile. */
import { chromium, type Browser } from 'playwright-core';

export async function launch(): Promise<{ browser: Browser; close: () => Promise<void> }> {
	const browser = await chromium.launch({
		executablePath: '/usr/bin/chromium',
		args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync']
	});
	return { browser, close: () => browser.close() };
}
