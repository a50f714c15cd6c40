/** Invitations and members: single-use expiring links stored as hashes, roles, the last owner, the Free member limit. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { and, eq } from 'drizzle-orm';
import { baseUrl, client, followLink, latestMail, linkIn, signIn, testClientAddress } from '../helpers/session.js';
import { addMember, closeDb, db, makeTeam, makeUser, unique } from '../helpers/factories.js';
import { action } from '../helpers/forms.js';
import { invitations, memberships, teamBilling } from '../../src/lib/server/db/schema.js';

let teamId: string;
let owner: string;
let ownerId: string;

beforeAll(async () => {
	const team = await makeTeam(unique('Invites'));
	teamId = team.id;
	// on the Team tier (no Stripe subscription behind it), so the many invitations here stay under no member limit
	await db().insert(teamBilling).values({ teamId, status: 'active' });
	const u = await makeUser('owner');
	ownerId = u.id;
	await addMember(team.id, u.id, 'owner');
	owner = await signIn(u.email!);
});
afterAll(closeDb);

const members = `/teams/${'{team}'}/members`;
const page = (t = teamId) => members.replace('{team}', t);

/** Invite an address and return the link from its mail. */
async function invite(email: string, role = 'editor', cookie = owner, team = teamId) {
	const before = Date.now();
	const r = await action(cookie, `${page(team)}?/invite`, { email, role });
	expect(r.status, JSON.stringify(r.data)).toBe(200);
	const mail = await latestMail(email.toLowerCase(), before);
	return { link: linkIn(mail), mail };
}

const tokenOf = (link: string) => new URL(link).pathname.split('/').pop()!;
const roleIn = async (userId: string, team = teamId) =>
	(await db().select({ role: memberships.role }).from(memberships).where(and(eq(memberships.teamId, team), eq(memberships.userId, userId))))[0]?.role ?? null;

describe('invitations', () => {
	it('mails a link that states its 72-hour lifetime and stores only a SHA-256 hash of the token', async () => {
		const email = `${unique('hash')}@example.org`;
		const { link, mail } = await invite(email);
		expect(link.startsWith(`${baseUrl()}/invite/`)).toBe(true);
		expect(mail.text).toContain('expires in 72 hours');
		const token = tokenOf(link);
		const [row] = await db().select().from(invitations).where(eq(invitations.email, email));
		expect(row.tokenHash).toBe(createHash('sha256').update(token).digest('hex'));
		expect(JSON.stringify(row)).not.toContain(token);
		// the stated lifetime is the stored one (within a minute)
		expect(Math.abs(row.expiresAt.getTime() - row.sentAt.getTime() - 72 * 3600_000)).toBeLessThan(60_000);
	});

	it('lets a new user sign in from the invitation and accept it with the invited role', async () => {
		const email = `${unique('newbie')}@example.org`;
		const { link } = await invite(email, 'viewer');
		const path = new URL(link).pathname;
		const signedOut = await (await client(null)(path)).text();
		expect(signedOut).toContain('Sign in to accept');
		expect(signedOut).toContain(`/signin?redirectTo=${encodeURIComponent(path)}`);

		// sign in with redirectTo set to the invitation: the magic link brings the user back to it
		const before = Date.now();
		await fetch(`${baseUrl()}/signin`, {
			method: 'POST',
			headers: { origin: baseUrl(), 'content-type': 'application/x-www-form-urlencoded', 'x-forwarded-for': testClientAddress() },
			body: new URLSearchParams({ providerId: 'nodemailer', email, redirectTo: path }),
			redirect: 'manual'
		});
		const signedIn = await followLink(linkIn(await latestMail(email, before)));
		expect(signedIn.location).toBe(`${baseUrl()}${path}`);
		const r = await action(signedIn.cookie, `${path}?/accept`);
		expect(r.status).toBe(303);
		expect(r.location).toBe(`/teams/${teamId}/projects`);
		const { teams } = await (await client(signedIn.cookie)('/api/teams')).json();
		expect(teams.find((t: { id: string }) => t.id === teamId)?.role).toBe('viewer');
	});

	it('adds an existing user, and refuses the same link a second time', async () => {
		const u = await makeUser('existing');
		const cookie = await signIn(u.email!);
		const { link } = await invite(u.email!, 'admin');
		const path = new URL(link).pathname;
		expect((await action(cookie, `${path}?/accept`)).status).toBe(303);
		expect(await roleIn(u.id)).toBe('admin');
		const again = await action(cookie, `${path}?/accept`);
		expect(again.status).toBe(410);
		expect(again.data?.error).toContain('already used');
		expect(await (await client(cookie)(path)).text()).toContain('This invitation no longer works');
	});

	it('refuses an expired link, a revoked link and a link for another address', async () => {
		const late = await makeUser('late');
		const { link: lateLink } = await invite(late.email!);
		await db().update(invitations).set({ expiresAt: new Date(Date.now() - 1000) }).where(eq(invitations.email, late.email!));
		const expired = await action(await signIn(late.email!), `${new URL(lateLink).pathname}?/accept`);
		expect(expired.status).toBe(410);
		expect(expired.data?.error).toContain('expired');

		const gone = await makeUser('revoked');
		const { link: goneLink } = await invite(gone.email!);
		const [row] = await db().select().from(invitations).where(eq(invitations.email, gone.email!));
		expect((await action(owner, `${page()}?/revoke`, { invitationId: row.id })).status).toBe(200);
		const revoked = await action(await signIn(gone.email!), `${new URL(goneLink).pathname}?/accept`);
		expect(revoked.status).toBe(410);
		expect(revoked.data?.error).toContain('withdrawn');
		expect(await roleIn(gone.id)).toBeNull();

		const intended = `${unique('intended')}@example.org`;
		const { link } = await invite(intended);
		const stranger = await makeUser('stranger');
		const wrong = await action(await signIn(stranger.email!), `${new URL(link).pathname}?/accept`);
		expect(wrong.status).toBe(403);
		expect(wrong.data?.error).toBe(`This invitation was sent to ${intended}, but you are signed in as ${stranger.email}. Sign out and sign in with ${intended} to accept it.`);
		expect(await roleIn(stranger.id)).toBeNull();
	});

	it('resend sends a new link and the old one stops working', async () => {
		const u = await makeUser('resend');
		const { link: first } = await invite(u.email!);
		const [row] = await db().select().from(invitations).where(eq(invitations.email, u.email!));
		const before = Date.now();
		expect((await action(owner, `${page()}?/resend`, { invitationId: row.id })).status).toBe(200);
		const second = linkIn(await latestMail(u.email!, before));
		expect(second).not.toBe(first);
		const cookie = await signIn(u.email!);
		expect((await action(cookie, `${new URL(first).pathname}?/accept`)).status).toBe(404);
		expect((await action(cookie, `${new URL(second).pathname}?/accept`)).status).toBe(303);
	});

	it('answers an unknown token with a clear page, and refuses duplicate and member invitations', async () => {
		expect(await (await client(null)('/invite/not-a-real-token')).text()).toContain('This invitation link is not valid');
		const email = `${unique('dup')}@example.org`;
		await invite(email);
		const dup = await action(owner, `${page()}?/invite`, { email: email.toUpperCase(), role: 'editor' });
		expect(dup.status).toBe(409);
		expect(dup.data?.error).toContain('already has an open invitation');
		const member = await makeUser('member');
		await addMember(teamId, member.id, 'viewer');
		const already = await action(owner, `${page()}?/invite`, { email: member.email!, role: 'editor' });
		expect(already.status).toBe(409);
		const bad = await action(owner, `${page()}?/invite`, { email: 'not an address', role: 'editor' });
		expect(bad.status).toBe(400);
		expect(bad.data?.error).toBe('Enter a valid e-mail address, like ana@example.org.');
	});
});

describe('members', () => {
	it('keeps the last owner: they can neither leave nor be demoted, until another owner exists', async () => {
		const team = await makeTeam(unique('Owners'));
		const o = await makeUser('solo');
		await addMember(team.id, o.id, 'owner');
		const cookie = await signIn(o.email!);
		const leave = await action(cookie, `${page(team.id)}?/leave`);
		expect(leave.status).toBe(409);
		expect(leave.data?.error).toBe('You are the only owner of this team, so you cannot leave it. Make another member owner first.');
		const demote = await action(cookie, `${page(team.id)}?/role`, { userId: o.id, role: 'admin' });
		expect(demote.status).toBe(409);
		expect(demote.data?.error).toContain('only owner');
		expect(await roleIn(o.id, team.id)).toBe('owner');

		const other = await makeUser('second');
		await addMember(team.id, other.id, 'editor');
		expect((await action(cookie, `${page(team.id)}?/role`, { userId: other.id, role: 'owner' })).status).toBe(200);
		expect((await action(cookie, `${page(team.id)}?/role`, { userId: o.id, role: 'viewer' })).status).toBe(200);
		expect(await roleIn(o.id, team.id)).toBe('viewer');
	});

	it('lets an admin change roles and remove members, but not touch owners or make owners', async () => {
		const team = await makeTeam(unique('Admins'));
		const [o, a, e] = [await makeUser('o'), await makeUser('a'), await makeUser('e')];
		await addMember(team.id, o.id, 'owner');
		await addMember(team.id, a.id, 'admin');
		await addMember(team.id, e.id, 'editor');
		const admin = await signIn(a.email!);
		expect((await action(admin, `${page(team.id)}?/role`, { userId: e.id, role: 'viewer' })).status).toBe(200);
		expect(await roleIn(e.id, team.id)).toBe('viewer');
		expect((await action(admin, `${page(team.id)}?/role`, { userId: e.id, role: 'owner' })).status).toBe(403);
		expect((await action(admin, `${page(team.id)}?/remove`, { userId: o.id })).status).toBe(403);
		expect((await action(admin, `${page(team.id)}?/invite`, { email: `${unique('x')}@example.org`, role: 'owner' })).status).toBe(403);
		expect((await action(admin, `${page(team.id)}?/remove`, { userId: e.id })).status).toBe(200);
		expect(await roleIn(e.id, team.id)).toBeNull();
	});

	it('refuses an invitation over the Free member limit with what the Team tier unlocks', async () => {
		const team = await makeTeam(unique('Full'));
		const o = await makeUser('full-owner');
		await addMember(team.id, o.id, 'owner');
		for (let i = 0; i < 3; i++) await addMember(team.id, (await makeUser('m')).id, 'viewer');
		const cookie = await signIn(o.email!);
		await invite(`${unique('fifth')}@example.org`, 'viewer', cookie, team.id); // 4 members + 1 open invitation = 5
		const over = await action(cookie, `${page(team.id)}?/invite`, { email: `${unique('sixth')}@example.org`, role: 'viewer' });
		expect(over.status).toBe(402);
		expect(over.data?.error).toContain('The Free tier allows 5 members per team (open invitations count); this team has 5.');
		expect(over.data?.error).toContain('The Team tier ($15.00 per seat per month) has no limit on members');
		expect(await (await client(cookie)(page(team.id))).text()).toContain('The Free tier allows 5 members');
	});

	it('lists pending invitations with their expiry for admins only', async () => {
		const email = `${unique('listed')}@example.org`;
		await invite(email);
		expect(await (await client(owner)(page())).text()).toContain(email);
		const v = await makeUser('viewer');
		await addMember(teamId, v.id, 'viewer');
		expect(await (await client(await signIn(v.email!))(page())).text()).not.toContain(email);
	});
});

describe('leaving', () => {
	it('sends a member who left home, without access to the team', async () => {
		const u = await makeUser('leaver');
		await addMember(teamId, u.id, 'editor');
		const cookie = await signIn(u.email!);
		const r = await action(cookie, `${page()}?/leave`);
		expect(r.status).toBe(303);
		expect(await roleIn(u.id)).toBeNull();
		expect((await client(cookie)(page())).status).toBe(404);
		expect(ownerId).toBeTruthy();
	});
});
