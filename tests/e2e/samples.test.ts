/** In a real browser: upload a sample through the Samples page form, watch the worker's profile appear, and reach "Use in plan". */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser } from 'playwright-core';
import { launch, signInThroughInbox } from '../helpers/browser.js';
import { baseUrl } from '../helpers/session.js';
import { addMember, closeDb, makeProject, makeTeam, makeUser, unique } from '../helpers/factories.js';
import { startWorker, type TestWorker } from '../helpers/worker.js';

let browser: Browser;
let close: () => Promise<void>;
let worker: TestWorker;

beforeAll(async () => {
	({ browser, close } = await launch());
	worker = await startWorker();
});
afterAll(async () => {
	await worker?.stop();
	await close?.();
	await closeDb();
});

describe('samples in the browser', () => {
	it('uploads a text sample with the form and shows its profile and malformed lines', async () => {
		const team = await makeTeam(unique('Sample team'));
		await makeProject(team.id, unique('Churn'));
		const u = await makeUser('editor');
		await addMember(team.id, u.id, 'editor');
		const { context, page } = await signInThroughInbox(browser, u.email!);
		await page.goto(`${baseUrl()}/teams/${team.id}/uploads`);
		expect(await page.getByTestId('upload-limit').textContent()).toBe('4 MiB');

		// invented rows: 30 rows with 2 nonzeros, a third of them positive, one malformed line (line 4)
		const rows = Array.from({ length: 30 }, (_, i) => `${i % 3 === 0 ? '+1' : '-1'} ${1 + (i % 4)}:1 9:1`);
		rows.splice(3, 0, '+1 9:1 2:1');
		await page.getByLabel(/^File/).setInputFiles({ name: 'churn-sample.svm', mimeType: 'text/plain', buffer: Buffer.from(rows.join('\n') + '\n') });
		await page.getByRole('button', { name: 'Upload sample' }).click();
		await page.waitForURL(/\/uploads\/[0-9a-f-]{36}$/);
		await page.getByTestId('upload-profile').waitFor({ timeout: 30_000 });
		expect(await page.getByTestId('profile-rows').textContent()).toBe('30');
		expect(await page.getByTestId('profile-features').textContent()).toBe('9');
		expect(await page.getByTestId('profile-positive').textContent()).toMatch(/33/);
		expect(await page.getByTestId('bad-lines').textContent()).toContain('feature index 2 after 9');
		await page.getByTestId('use-in-plan').getByRole('button', { name: 'Use in plan' }).waitFor();

		// a name with a folder in it is refused inline, naming the field
		await page.goto(`${baseUrl()}/teams/${team.id}/uploads`);
		await page.getByLabel(/^File/).setInputFiles({ name: 'a\\b.svm', mimeType: 'text/plain', buffer: Buffer.from('+1 1:1\n') });
		await page.getByRole('button', { name: 'Upload sample' }).click();
		await page.getByText('fileName must be a file name without folders').first().waitFor();
		expect(await page.getByTestId('upload-list').textContent()).toContain('churn-sample.svm');
		await context.close();
	});
});
