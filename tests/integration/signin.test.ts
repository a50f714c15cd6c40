/** The magic-link sign-in: first sign-in makes a personal team, links work once, sign-out ends the session. */
import { afterAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { baseUrl, client, followLink, requestLink, signIn } from '../helpers/session.js';
import { closeDb, db, unique } from '../helpers/factories.js';
import { verificationTokens } from '../../src/lib/server/db/schema.js';

afterAll(closeDb);

describe('sign-in', () => {
	it('gives a new user a personal team where they are owner', async () => {
		const email = `${unique('new')}@example.org`;
		const cookie = await signIn(email);
		const { teams } = await (await client(cookie)('/api/teams')).json();
		expect(teams).toHaveLength(1);
		expect(teams[0]).toMatchObject({ personal: true, role: 'owner' });
	});

	it('refuses a link used twice with a clear page', async () => {
		const link = await requestLink(`${unique('twice')}@example.org`);
		expect((await followLink(link)).cookie).not.toBeNull();
		const second = await followLink(link);
		expect(second.cookie).toBeNull();
		expect(second.location).toContain('/signin/problem?error=Verification');
		const page = await client(null)('/signin/problem?error=Verification');
		expect(await page.text()).toContain('This sign-in link no longer works');
	});

	it('refuses an expired link', async () => {
		const email = `${unique('late')}@example.org`;
		const link = await requestLink(email);
		await db().update(verificationTokens).set({ expires: new Date(Date.now() - 1000) }).where(eq(verificationTokens.identifier, email));
		const res = await followLink(link);
		expect(res.cookie).toBeNull();
		expect(res.location).toContain('error=Verification');
	});

	it('stores only a hash of the link token', async () => {
		const email = `${unique('hash')}@example.org`;
		const token = new URL(await requestLink(email)).searchParams.get('token')!;
		const rows = await db().select().from(verificationTokens).where(eq(verificationTokens.identifier, email));
		expect(rows).toHaveLength(1);
		expect(rows[0].token).not.toBe(token);
	});

	it('rejects a bad address naming the field', async () => {
		const res = await client(null)('/signin', {
			method: 'POST',
			body: new URLSearchParams({ providerId: 'nodemailer', email: 'not-an-address' }),
			headers: { 'content-type': 'application/x-www-form-urlencoded', 'x-sveltekit-action': 'true', accept: 'application/json' }
		});
		const envelope = await res.json();
		expect(envelope.type).toBe('failure');
		expect(envelope.status).toBe(400);
		expect(envelope.data).toContain('Enter a valid e-mail address');
	});

	it('ends the session on sign-out: the old cookie no longer works', async () => {
		const cookie = await signIn(`${unique('out')}@example.org`);
		const call = client(cookie);
		expect((await call('/api/teams')).status).toBe(200);
		const out = await call('/signout', { method: 'POST', body: new URLSearchParams({ redirectTo: '/signin' }), headers: { 'content-type': 'application/x-www-form-urlencoded' } });
		expect(out.status).toBeLessThan(400);
		expect((await call('/api/teams')).status).toBe(401);
	});

	it('refuses a cross-origin form post and a cross-origin JSON write', async () => {
		const form = await fetch(`${baseUrl()}/signin`, {
			method: 'POST',
			headers: { origin: 'http://evil.example', 'content-type': 'application/x-www-form-urlencoded' },
			body: 'email=a@b.org'
		});
		expect(form.status).toBe(403);
		const apiRes = await fetch(`${baseUrl()}/api/projects`, {
			method: 'POST',
			headers: { origin: 'http://evil.example', 'content-type': 'application/json' },
			body: '{}'
		});
		expect(apiRes.status).toBe(403);
		expect((await apiRes.json()).error.code).toBe('cross_origin');
	});
});
