/** In a real browser: sign in through the inbox, create a project, see it listed; a viewer cannot create. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser } from 'playwright-core';
import { launch, signInThroughInbox as signIn } from '../helpers/browser.js';
import { baseUrl } from '../helpers/session.js';
import { addMember, closeDb, makeTeam, makeUser, unique } from '../helpers/factories.js';

let browser: Browser;
let close: () => Promise<void>;

beforeAll(async () => {
	({ browser, close } = await launch());
});
afterAll(async () => {
	await close?.();
	await closeDb();
});

const signInThroughInbox = (email: string) => signIn(browser, email);

describe('projects in the browser', () => {
	it('signs in by magic link, creates a project and sees it listed', async () => {
		const { context, page } = await signInThroughInbox(`${unique('e2e')}@example.org`);
		await expect.poll(() => page.getByTestId('who').textContent()).toContain('@example.org');
		const name = unique('Late parcels');
		await page.getByLabel('Name').fill(name);
		await page.getByRole('button', { name: 'Create project' }).click();
		await page.getByTestId('project-list').getByText(name).waitFor();
		expect(await page.getByRole('status').textContent()).toContain(`Project "${name}" created.`);

		// inline rename goes through the API and keeps the typed text on error
		await page.getByTestId('project-row').filter({ hasText: name }).getByRole('button', { name: 'Rename' }).click();
		await page.getByLabel('New project name').fill('');
		await page.getByRole('button', { name: 'Save' }).click();
		await page.getByText('Name is required.').waitFor();
		await page.getByLabel('New project name').fill(`${name} (renamed)`);
		await page.getByRole('button', { name: 'Save' }).click();
		await page.getByTestId('project-list').getByText(`${name} (renamed)`).waitFor();
		expect(await page.getByTestId('project-row').count()).toBe(1);
		await context.close();
	});

	it('shows a viewer no create button, and the API answers 403', async () => {
		const team = await makeTeam(unique('Viewers only'));
		const viewer = await makeUser('viewer');
		await addMember(team.id, viewer.id, 'viewer');
		const { context, page } = await signInThroughInbox(viewer.email!);
		await page.goto(`${baseUrl()}/teams/${team.id}/projects`);
		await page.getByRole('heading', { name: 'Projects' }).waitFor();
		expect(await page.getByRole('button', { name: 'Create project' }).count()).toBe(0);
		const status = await page.evaluate(async (teamId) => {
			const res = await fetch('/api/projects', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ teamId, name: 'sneaky' }) });
			return res.status;
		}, team.id);
		expect(status).toBe(403);
		await context.close();
	});
});
