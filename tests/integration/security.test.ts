/** Security basics: headers on every page, cross-site form posts, sign-in rate limits, SQL-looking text kept as text. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { readFileSync } from 'node:fs';
import { baseUrl, client, followLink, requestLink, signIn, testClientAddress } from '../helpers/session.js';
import { addMember, closeDb, db, makeProject, makeTeam, makeUser, unique } from '../helpers/factories.js';
import { action } from '../helpers/forms.js';
import { invitations, projects, teamBilling } from '../../src/lib/server/db/schema.js';

let teamId: string;
let projectId: string;
let owner: string;

beforeAll(async () => {
	const team = await makeTeam(unique('Secure'));
	teamId = team.id;
	await db().insert(teamBilling).values({ teamId, status: 'active' });
	projectId = (await makeProject(teamId)).id;
	const u = await makeUser('owner');
	await addMember(teamId, u.id, 'owner');
	owner = await signIn(u.email!);
});
afterAll(closeDb);

describe('security headers', () => {
	const signedOutPages = ['/signin', '/signin/check-email', '/signin/problem?error=Verification', '/pricing', '/invite/unknown-token'];
	const signedInPages = () => [`/teams/${teamId}/projects`, `/teams/${teamId}/projects/${projectId}`, `/teams/${teamId}/members`, `/teams/${teamId}/billing`, `/teams/${teamId}/compare`, `/teams/${teamId}/machines`, `/teams/${teamId}/uploads`, `/teams/${teamId}/plans/new?project=${projectId}`, '/settings', '/pricing'];

	function expectHeaders(res: Response, path: string) {
		expect(res.status, path).toBe(200);
		const csp = res.headers.get('content-security-policy') ?? '';
		// scripts only from the app itself or with the per-response nonce SvelteKit adds
		expect(csp, path).toMatch(/script-src 'self'( 'nonce-[^']+')?/);
		expect(csp, path).toContain("default-src 'self'");
		expect(csp, path).toContain("frame-ancestors 'none'");
		expect(csp, path).toContain("object-src 'none'");
		expect(res.headers.get('x-frame-options'), path).toBe('DENY');
		expect(res.headers.get('x-content-type-options'), path).toBe('nosniff');
	}

	it('sends a content security policy, frame denial and nosniff on every page, signed out and in', async () => {
		for (const p of signedOutPages) expectHeaders(await client(null)(p), p);
		for (const p of signedInPages()) expectHeaders(await client(owner)(p), p);
		const apiRes = await client(owner)('/api/teams');
		expect(apiRes.headers.get('x-content-type-options')).toBe('nosniff');
	});
});

describe('cross-site form posts', () => {
	const target = () => `/teams/${teamId}/projects?/create`;
	for (const type of ['application/x-www-form-urlencoded', 'APPLICATION/X-WWW-FORM-URLENCODED', 'Multipart/Form-Data; boundary=x', 'TEXT/PLAIN']) {
		it(`refuses a form post from another origin with content type ${type}`, async () => {
			const name = unique('csrf');
			const res = await fetch(`${baseUrl()}${target()}`, { method: 'POST', headers: { origin: 'http://evil.example', cookie: owner, 'content-type': type }, body: `name=${name}` });
			expect(res.status).toBe(403);
			expect(await db().select().from(projects).where(eq(projects.name, name))).toHaveLength(0);
		});
	}

	it('refuses a cross-site JSON write to the API by its own origin check, whatever the content type', async () => {
		// text/plain is also a form type, so SvelteKit's own check answers first (in plain text); JSON types reach the app's check
		const plain = await fetch(`${baseUrl()}/api/projects`, { method: 'POST', headers: { origin: 'http://evil.example', cookie: owner, 'content-type': 'TEXT/PLAIN' }, body: '{}' });
		expect(plain.status).toBe(403);
		for (const type of ['application/json', 'APPLICATION/JSON', 'application/vnd.api+json']) {
			const res = await fetch(`${baseUrl()}/api/projects`, { method: 'POST', headers: { origin: 'http://evil.example', cookie: owner, 'content-type': type }, body: JSON.stringify({ teamId, name: unique('x') }) });
			expect(res.status).toBe(403);
			expect((await res.json()).error.code).toBe('cross_origin');
		}
		const fetchMeta = await fetch(`${baseUrl()}/api/projects`, { method: 'POST', headers: { 'sec-fetch-site': 'cross-site', cookie: owner, 'content-type': 'application/json' }, body: '{}' });
		expect(fetchMeta.status).toBe(403);
	});
});

describe('sign-in rate limits', () => {
	const ask = (email: string, from: string) =>
		fetch(`${baseUrl()}/signin`, {
			method: 'POST',
			// accept as a browser's plain form post does, so the refusal comes back as the sign-in page itself
			headers: { origin: baseUrl(), accept: 'text/html', 'content-type': 'application/x-www-form-urlencoded', 'x-forwarded-for': from },
			body: new URLSearchParams({ providerId: 'nodemailer', email, redirectTo: '/' }),
			redirect: 'manual'
		});

	it('allows 5 links per address in 15 minutes, then says why on the sign-in page', async () => {
		const email = `${unique('flood')}@example.org`;
		for (let i = 0; i < 5; i++) expect((await ask(email, testClientAddress())).status).toBeLessThan(400);
		const refused = await ask(email, testClientAddress());
		expect(refused.status).toBe(429);
		expect(await refused.text()).toContain(`Too many sign-in links were asked for ${email} (at most 5 in 15 minutes).`);
		// Auth.js's own endpoint shares the limit
		const direct = await fetch(`${baseUrl()}/auth/signin/nodemailer`, { method: 'POST', headers: { origin: baseUrl(), 'content-type': 'application/x-www-form-urlencoded', 'x-forwarded-for': testClientAddress() }, body: new URLSearchParams({ email }), redirect: 'manual' });
		expect(direct.status).toBe(429);
	});

	it('allows 30 links per client address in 15 minutes, across addresses', async () => {
		const from = testClientAddress();
		for (let i = 0; i < 30; i++) expect((await ask(`${unique('crowd')}@example.org`, from)).status).toBeLessThan(400);
		const refused = await ask(`${unique('crowd')}@example.org`, from);
		expect(refused.status).toBe(429);
		expect(await refused.text()).toContain('Too many sign-in links were asked from your network');
		// another client is unaffected
		expect((await ask(`${unique('other')}@example.org`, testClientAddress())).status).toBeLessThan(400);
	});
});

describe('SQL-looking text', () => {
	const nasty = ["Robert'); DROP TABLE project;--", "1' OR '1'='1", 'x"; DELETE FROM "user" WHERE ""="', '%_\\ ; SELECT pg_sleep(5) --'];

	it('stores and shows project names and descriptions exactly as typed', async () => {
		const api = client(owner);
		for (const text of nasty) {
			const res = await api('/api/projects', { method: 'POST', json: { teamId, name: `${text} ${unique('n')}`, description: text } });
			expect(res.status).toBe(201);
			const { project } = await res.json();
			const [row] = await db().select().from(projects).where(eq(projects.id, project.id));
			expect(row.description).toBe(text);
			expect(row.name.startsWith(text)).toBe(true);
			const shown = await (await api(`/api/projects/${project.id}`)).json();
			expect(shown.project.description).toBe(text);
		}
		const html = await (await api(`/teams/${teamId}/projects`)).text();
		// Svelte escapes & and < in text; quotes stay as typed
		expect(html).toContain("Robert'); DROP TABLE project;--");
		expect(html).toContain("1' OR '1'='1");
		const formName = `${nasty[0]} form ${unique('f')}`;
		expect((await action(owner, `/teams/${teamId}/projects?/create`, { name: formName, description: nasty[1] })).status).toBe(200);
		expect(await db().select().from(projects).where(eq(projects.name, formName))).toHaveLength(1);
	});

	it('keeps an invitation address with a quote as text and refuses SQL that is not an address, naming the field', async () => {
		const email = `o'neil--${unique('q')}@example.org`;
		expect((await action(owner, `/teams/${teamId}/members?/invite`, { email, role: 'viewer' })).status).toBe(200);
		expect(await db().select().from(invitations).where(eq(invitations.email, email))).toHaveLength(1);
		expect(await (await client(owner)(`/teams/${teamId}/members`)).text()).toContain(`<span class="font-medium">${email}</span>`);
		const bad = await action(owner, `/teams/${teamId}/members?/invite`, { email: "x'; DROP TABLE invitation;--", role: 'viewer' });
		expect(bad.status).toBe(400);
		expect(bad.data?.fields).toEqual({ email: 'Enter a valid e-mail address, like ana@example.org.' });
		const role = await action(owner, `/teams/${teamId}/members?/invite`, { email: `${unique('r')}@example.org`, role: "admin' OR '1'='1" });
		expect(role.status).toBe(400);
		expect(role.data?.fields).toEqual({ role: 'Role must be owner, admin, editor or viewer.' });
	});

	it('treats SQL in query and path parameters as data: a clear 4xx, never a 500', async () => {
		const api = client(owner);
		const byTeam = await api(`/api/projects?teamId=${encodeURIComponent("' OR 1=1 --")}`);
		expect(byTeam.status).toBe(404);
		expect((await api(`/api/projects/${encodeURIComponent('1 OR 1=1')}`)).status).toBe(404);
		expect((await api(`/teams/${encodeURIComponent("x' OR '1'='1")}/members`)).status).toBe(404);
		expect((await api(`/invite/${encodeURIComponent("' OR 1=1 --")}`)).status).toBe(200);
	});

	it('keeps SQL in the plan list search, sort and filter parameters as data', async () => {
		const api = client(owner);
		const plan = JSON.parse(readFileSync('tests/fixtures/plan-example.json', 'utf8'));
		const name = `Robert'); DROP TABLE plan;-- ${unique('p')}`;
		const created = await api('/api/plans', { method: 'POST', json: { projectId, name, plan } });
		expect(created.status).toBe(201);
		const list = async (params: Record<string, string>) => api(`/api/plans?${new URLSearchParams({ projectId, ...params })}`);
		const found = await (await list({ q: 'DROP TABLE plan' })).json();
		expect(found.rows.map((p: { name: string }) => p.name)).toEqual([name]);
		expect((await (await list({ q: "' OR '1'='1" })).json()).rows).toEqual([]);
		// LIKE wildcards in the search are literal characters, not patterns
		expect((await (await list({ q: '%' })).json()).rows).toEqual([]);
		const sort = await list({ sort: 'name; DROP TABLE plan' });
		expect(sort.status).toBe(400);
		expect((await sort.json()).error.message).toContain('sort must be one of');
		expect((await list({ verdict: "meets' OR 1=1 --" })).status).toBe(400);
		const page = await api(`/teams/${teamId}/projects/${projectId}?${new URLSearchParams({ q: "DROP TABLE plan" })}`);
		expect(page.status).toBe(200);
		expect(await page.text()).toContain("Robert'); DROP TABLE plan;--");
	});
});

describe('magic links', () => {
	it('refuses a sign-in link whose address was changed to another one', async () => {
		const link = new URL(await requestLink(`${unique('mine')}@example.org`));
		link.searchParams.set('email', `${unique('theirs')}@example.org`);
		const res = await followLink(link.toString());
		expect(res.cookie).toBeNull();
		expect(res.location).toContain('error=Verification');
	});
});
