/**
 * In a real browser: create a plan and watch the estimate and charts appear, change RAM and see
 * the estimate move, save, calibrate and watch the progress bar finish, use an uploaded sample
 * in a plan, and compare two plans from different projects.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import type { ChildProcess } from 'node:child_process';
import { inject } from 'vitest';
import { launch, signInThroughInbox } from '../helpers/browser.js';
import { baseUrl } from '../helpers/session.js';
import { addMember, closeDb, makeProject, makeTeam, makeUser, unique } from '../helpers/factories.js';
import { startWorker } from '../../src/cli/services.js';

let browser: Browser;
let close: () => Promise<void>;
let worker: ChildProcess;
let page: Page;
let teamId: string;
let projectA: { id: string; name: string };
let projectB: { id: string; name: string };

beforeAll(async () => {
	({ browser, close } = await launch());
	// a tiny calibration, so the progress bar finishes within the test
	worker = startWorker({ DATABASE_URL: inject('databaseUrl'), LOADLINE_CALIBRATION_SECONDS: '4', LOADLINE_CALIBRATION_MAX_ROWS: '2000' });
	const team = await makeTeam(unique('Harbour forecasting'));
	teamId = team.id;
	projectA = await makeProject(team.id, unique('Berth delays'));
	projectB = await makeProject(team.id, unique('Crane faults'));
	const u = await makeUser('planner');
	await addMember(team.id, u.id, 'editor');
	({ page } = await signInThroughInbox(browser, u.email!));
});

afterAll(async () => {
	worker?.kill('SIGTERM');
	await close?.();
	await closeDb();
});

const memoryP50 = () => page.locator('[data-testid="strategy-table"] tr[data-strategy="memory"]').innerText();

async function newPlan(projectId: string, name: string, rows: string) {
	await page.goto(`${baseUrl()}/teams/${teamId}/plans/new?project=${projectId}`);
	await page.getByTestId('recommendation').waitFor();
	await page.getByLabel('Plan name').fill(name);
	await page.getByLabel('Rows').fill(rows);
	// a small feature dimension keeps the calibration of this plan short
	await page.getByLabel('Features').fill('20000');
	await expect.poll(memoryP50, { timeout: 10_000 }).toMatch(/min|h|s|days/);
}

describe('planning in the browser', () => {
	it('creates a plan: estimate and charts appear, RAM moves the estimate, save keeps it', async () => {
		await newPlan(projectA.id, 'Nightly berth model', '20000');
		// the charts are drawn in the browser (LayerChart): wait for their shapes
		await page.locator('[data-testid="wall-time-chart"] [data-testid="range-bar"]').first().waitFor();
		// a what-if line may be flat (a small plan fits at every RAM size): a flat path has no height, so
		// wait for it to be drawn rather than visible
		const line = page.locator('[data-testid="what-if-chart"] path').first();
		await line.waitFor({ state: 'attached' });
		expect(await line.getAttribute('d')).toMatch(/^M[\d.]+,[\d.]+L/);
		expect(await page.getByTestId('caution').innerText()).toContain('pilot run');

		await page.getByLabel('RAM').fill('64');
		await expect.poll(memoryP50).not.toContain('Does not fit');
		await page.getByLabel('Rows').fill('2000000000');
		await expect.poll(memoryP50, { timeout: 10_000 }).toContain('Does not fit');
		await page.getByLabel('Rows').fill('20000');
		await expect.poll(memoryP50, { timeout: 10_000 }).not.toContain('Does not fit');

		// a bad value is marked inline and what was typed stays
		await page.getByLabel('Positive fraction').fill('1.5');
		await page.getByText('dataset.positiveFraction must be less than 1').waitFor();
		expect(await page.getByLabel('Plan name').inputValue()).toBe('Nightly berth model');
		await page.getByLabel('Positive fraction').fill('0.3');

		await page.getByRole('button', { name: 'Save plan' }).click();
		await page.waitForURL(/\/plans\/[0-9a-f-]{36}$/);
		await page.getByRole('heading', { name: 'Nightly berth model' }).waitFor();
		expect(await page.getByTestId('history').locator('tbody tr').count()).toBe(1);
		expect(await page.getByLabel('RAM').inputValue()).toBe('64');
	});

	it('calibrates the saved plan and the progress bar finishes', { timeout: 180_000 }, async () => {
		await page.getByTestId('calibration-panel').getByRole('button', { name: 'Calibrate' }).click();
		await page.getByTestId('calibration-progress').waitFor();
		await page.getByTestId('calibration-done').waitFor({ timeout: 150_000 });
		await expect.poll(() => page.getByTestId('basis').innerText(), { timeout: 10_000 }).toContain('synthetic data shaped like this plan');
		// the new calibration's convergence traces are drawn
		await page.locator('[data-testid="convergence-chart"] path').first().waitFor();
	});

	it('uses an uploaded sample in a plan', { timeout: 120_000 }, async () => {
		const rows = Array.from({ length: 40 }, (_, i) => `${i % 3 === 0 ? '+1' : '-1'} ${1 + (i % 5)}:1 ${7 + (i % 4)}:0.5 12:${(i % 7) / 7}`).join('\n') + '\n';
		const uploaded = await page.evaluate(
			async ({ teamId, rows }) => {
				const res = await fetch(`/api/uploads?teamId=${teamId}&fileName=sample.svm&kind=svmlight`, { method: 'POST', body: rows });
				return (await res.json()).upload?.id as string;
			},
			{ teamId, rows }
		);
		await page.goto(`${baseUrl()}/teams/${teamId}/uploads/${uploaded}`);
		await page.getByTestId('use-in-plan').waitFor({ timeout: 90_000 });
		await page.getByLabel('Rows in the full dataset').fill('5000000');
		await page.getByRole('button', { name: 'Use in plan' }).click();
		await page.getByTestId('from-upload').waitFor();
		expect(await page.getByLabel('Rows').inputValue()).toBe('5000000');
		expect(await page.getByLabel('Features').inputValue()).toBe('12');
		await page.getByTestId('recommendation').waitFor();
	});

	it('compares two plans from different projects', async () => {
		await newPlan(projectB.id, 'Crane plan, big box', '20000');
		await page.getByLabel('RAM').fill('256');
		await page.getByRole('button', { name: 'Save plan' }).click();
		await page.waitForURL(/\/plans\/[0-9a-f-]{36}$/);

		await page.goto(`${baseUrl()}/teams/${teamId}/compare`);
		await page.getByTestId('plan-picker').getByLabel(/Nightly berth model/).check();
		await page.getByTestId('plan-picker').getByLabel(/Crane plan, big box/).check();
		await page.getByRole('button', { name: 'Compare 2 plans' }).click();
		await page.getByTestId('compare-table').waitFor();
		const ram = page.locator('[data-testid="compare-table"] tr', { hasText: 'RAM (GiB)' });
		expect(await ram.getAttribute('data-differs')).toBe('yes');
		await page.locator('[data-testid="wall-time-chart"] [data-testid="range-bar"]').nth(1).waitFor();
	});
});
