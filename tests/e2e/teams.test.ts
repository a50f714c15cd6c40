/** In a real browser: the team pages work under the content security policy (no violations), invite and subscribe by hand. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { launch } from '../helpers/browser.js';
import { baseUrl, client, latestMail, linkIn } from '../helpers/session.js';
import { readFileSync } from 'node:fs';
import { addMember, closeDb, makeProject, makeTeam, makeUser, unique } from '../helpers/factories.js';

let browser: Browser;
let close: () => Promise<void>;

beforeAll(async () => {
	({ browser, close } = await launch());
});
afterAll(async () => {
	await close?.();
	await closeDb();
});

/** Collect CSP violations the page reports (the DOM event and the console message Chromium prints). */
async function watch(page: Page) {
	const violations: string[] = [];
	await page.addInitScript(() => {
		document.addEventListener('securitypolicyviolation', (e) => {
			(window as unknown as { __csp: string[] }).__csp ??= [];
			(window as unknown as { __csp: string[] }).__csp.push(`${e.violatedDirective} ${e.blockedURI}${e.sourceFile ? ` at ${e.sourceFile}:${e.lineNumber}` : ""}`);
		});
	});
	page.on('console', (m) => {
		if (/Content Security Policy|Refused to/i.test(m.text())) violations.push(m.text());
	});
	page.on('pageerror', (e) => violations.push(`page error: ${e.message}`));
	return async () => [...violations, ...((await page.evaluate(() => (window as unknown as { __csp?: string[] }).__csp ?? [])) as string[])];
}

async function signInThroughInbox(page: Page, email: string) {
	await page.goto(`${baseUrl()}/signin`);
	const before = Date.now();
	await page.getByLabel('Work e-mail').fill(email);
	await page.getByRole('button', { name: 'E-mail me a sign-in link' }).click();
	await page.waitForURL(/\/signin\/check-email/);
	await page.goto(linkIn(await latestMail(email, before)));
	await page.waitForURL(/\/teams\//);
}

describe('team pages in the browser', () => {
	it('shows every main page without a CSP violation, then invites and subscribes through the forms', async () => {
		const team = await makeTeam(unique('Browser team'));
		const owner = await makeUser('browser-owner');
		await addMember(team.id, owner.id, 'owner');
		const project = await makeProject(team.id);
		const context = await browser.newContext();
		const page = await context.newPage();
		const violations = await watch(page);
		await signInThroughInbox(page, owner.email!);

		const pages = [
			[`/teams/${team.id}/projects`, 'Projects'],
			[`/teams/${team.id}/projects/${project.id}`, project.name],
			[`/teams/${team.id}/members`, 'Members'],
			[`/teams/${team.id}/billing`, 'Billing'],
			['/settings', 'Settings'],
			['/pricing', 'Pricing'],
			['/invite/not-a-token', 'This invitation link is not valid']
		];
		for (const [path, heading] of pages) {
			await page.goto(`${baseUrl()}${path}`);
			await page.getByRole('heading', { name: heading }).first().waitFor();
			expect(await violations(), path).toEqual([]);
		}

		// enhanced forms run their scripts under the policy: the result appears without a reload
		await page.goto(`${baseUrl()}/teams/${team.id}/members`);
		const invitee = `${unique('invitee')}@example.org`;
		await page.getByLabel('E-mail').fill(invitee);
		await page.getByRole('button', { name: 'Send invitation' }).click();
		await page.getByTestId('invitation-list').getByText(invitee).waitFor();
		expect(await page.getByRole('status').textContent()).toContain(`Invitation sent to ${invitee}`);

		await page.goto(`${baseUrl()}/teams/${team.id}/billing`);
		await page.getByRole('button', { name: 'Subscribe' }).click();
		await expect.poll(() => page.getByTestId('tier').textContent()).toBe('Team');
		expect(await page.getByTestId('seats').textContent()).toBe('1 × $15.00 per month');

		await page.goto(`${baseUrl()}/settings`);
		await page.getByLabel('E-mail me when a calibration I started finishes').uncheck();
		await page.getByRole('button', { name: 'Save settings' }).click();
		await page.getByText('Settings saved.').waitFor();
		await page.reload();
		expect(await page.getByLabel('E-mail me when a calibration I started finishes').isChecked()).toBe(false);
		expect(await violations()).toEqual([]);
		await context.close();
	});

	it('shows the planning pages (editor, plan with charts, compare, machines, samples) without a CSP violation', async () => {
		const team = await makeTeam(unique('Planning under CSP'));
		const owner = await makeUser('csp-owner');
		await addMember(team.id, owner.id, 'owner');
		const project = await makeProject(team.id);
		const context = await browser.newContext();
		const page = await context.newPage();
		const violations = await watch(page);
		await signInThroughInbox(page, owner.email!);
		const plan = JSON.parse(readFileSync('tests/fixtures/plan-example.json', 'utf8'));
		const cookie = (await context.cookies()).map((c) => `${c.name}=${c.value}`).join('; ');
		const created = await (await client(cookie)('/api/plans', { method: 'POST', json: { projectId: project.id, plan } })).json();
		const paths = [`/teams/${team.id}/plans/new?project=${project.id}`, `/teams/${team.id}/plans/${created.plan.id}`, `/teams/${team.id}/compare`, `/teams/${team.id}/machines`, `/teams/${team.id}/uploads`];
		for (const path of paths) {
			const res = await page.goto(`${baseUrl()}${path}`, { waitUntil: 'networkidle' });
			expect(res?.status(), path).toBe(200);
			expect(await violations(), path).toEqual([]);
		}
		await context.close();
	});

	it('takes a new person from the invitation mail through sign-in back to the invitation, and into the team', async () => {
		const team = await makeTeam(unique('Inviting team'));
		const owner = await makeUser('inviting-owner');
		await addMember(team.id, owner.id, 'owner');
		const ownerContext = await browser.newContext();
		const ownerPage = await ownerContext.newPage();
		await signInThroughInbox(ownerPage, owner.email!);
		await ownerPage.goto(`${baseUrl()}/teams/${team.id}/members`);
		const invitee = `${unique('joiner')}@example.org`;
		const sent = Date.now();
		await ownerPage.getByLabel('E-mail', { exact: true }).fill(invitee);
		await ownerPage.locator('form[action="?/invite"] select[name=role]').selectOption('viewer');
		await ownerPage.getByRole('button', { name: 'Send invitation' }).click();
		await ownerPage.getByTestId('invitation-list').getByText(invitee).waitFor();

		const context = await browser.newContext();
		const page = await context.newPage();
		const violations = await watch(page);
		await page.goto(linkIn(await latestMail(invitee, sent)));
		await page.getByRole('link', { name: 'Sign in to accept' }).click();
		await page.waitForURL(/\/signin\?redirectTo=/);
		const asked = Date.now();
		await page.getByLabel('Work e-mail').fill(invitee);
		await page.getByRole('button', { name: 'E-mail me a sign-in link' }).click();
		await page.waitForURL(/\/signin\/check-email/);
		await page.goto(linkIn(await latestMail(invitee, asked)));
		await page.waitForURL(/\/invite\//);
		await page.getByRole('button', { name: /Accept and join/ }).click();
		await page.waitForURL(new RegExp(`/teams/${team.id}/projects`));
		expect(await page.getByText('you are viewer').count()).toBe(1);
		expect(await violations()).toEqual([]);

		await ownerPage.reload();
		expect(await ownerPage.getByTestId('member-list').getByText(invitee).count()).toBe(1);
		expect(await ownerPage.getByTestId('invitation-row').count()).toBe(0);
		await context.close();
		await ownerContext.close();
	});
});
