/**
 * Invitations by e-mail. The link carries a random token; only its SHA-256 hash is stored, so a
 * database copy cannot be turned into working links. A link works once, until it expires or is revoked,
 * and only for the address it was sent to.
 */
import { createHash, randomBytes } from 'node:crypto';
import { and, asc, eq, isNull, sql } from 'drizzle-orm';
import { db } from './db/index.js';
import { invitations, memberships, teams, users, type Invitation, type Role } from './db/schema.js';
import { ApiError } from './http.js';
import * as mail from './mail.js';
import * as letters from './letters.js';
import * as limits from './billing/limits.js';
import * as subscription from './billing/subscription.js';
import * as ratelimit from './ratelimit.js';
import type { InviteInput } from '$lib/schemas/invitation.js';

/** An invitation link works for this long after it is sent (or re-sent). */
export const INVITE_HOURS = 72;

export const hashToken = (token: string) => createHash('sha256').update(token, 'utf8').digest('hex');
const newToken = () => randomBytes(32).toString('base64url');
const expiry = () => new Date(Date.now() + INVITE_HOURS * 3600_000);

function isUniqueViolation(e: unknown): boolean {
	const err = e as { code?: string; cause?: { code?: string } };
	return err?.code === '23505' || err?.cause?.code === '23505';
}

export interface Inviter {
	id: string;
	email: string;
	name: string | null;
	role: Role;
}

/** Open invitations of a team (not accepted, not revoked), newest first; expired ones are flagged. */
export async function listOpen(teamId: string) {
	const rows = await db
		.select({ id: invitations.id, email: invitations.email, role: invitations.role, sentAt: invitations.sentAt, expiresAt: invitations.expiresAt, invitedBy: users.email })
		.from(invitations)
		.leftJoin(users, eq(users.id, invitations.invitedBy))
		.where(and(eq(invitations.teamId, teamId), isNull(invitations.acceptedAt), isNull(invitations.revokedAt)))
		.orderBy(asc(invitations.email));
	const now = Date.now();
	return rows.map((r) => ({ ...r, expired: r.expiresAt.getTime() <= now }));
}

async function sendLink(teamId: string, inviter: { email: string; name: string | null }, email: string, role: Role, token: string, origin: string) {
	if (!(await ratelimit.hit(`invite:team:${teamId}`, ratelimit.INVITES_PER_TEAM))) {
		throw new ApiError(429, 'rate_limited', `This team has sent ${ratelimit.INVITES_PER_TEAM.limit} invitation e-mails in the last hour. Wait a little, then try again.`);
	}
	const [team] = await db.select({ name: teams.name }).from(teams).where(eq(teams.id, teamId));
	const url = `${origin}/invite/${token}`;
	await mail.send({ to: email, ...letters.invitation({ teamName: team.name, invitedBy: inviter.name || inviter.email, role, url, hours: INVITE_HOURS }) });
}

/** Invite an address with a role and e-mail the link. Admins invite up to admin; only an owner invites an owner. */
export async function create(teamId: string, inviter: Inviter, input: InviteInput, origin: string): Promise<Invitation> {
	if (input.role === 'owner' && inviter.role !== 'owner') throw new ApiError(403, 'forbidden', 'Only an owner can invite another owner.', { role: 'Only an owner can invite another owner.' });
	const [member] = await db
		.select({ userId: memberships.userId })
		.from(memberships)
		.innerJoin(users, eq(users.id, memberships.userId))
		.where(and(eq(memberships.teamId, teamId), sql`lower(${users.email}) = ${input.email}`));
	if (member) throw new ApiError(409, 'already_member', `${input.email} is already a member of this team.`, { email: 'Already a member of this team.' });
	const token = newToken();
	try {
		// The row commits only if the mail went out, so a failed send leaves nothing half-done; the member limit is checked under the same lock.
		return await limits.within(teamId, 'members', 'email', async (tx) => {
			const [row] = await tx.insert(invitations).values({ teamId, email: input.email, role: input.role, tokenHash: hashToken(token), invitedBy: inviter.id, expiresAt: expiry() }).returning();
			await sendLink(teamId, inviter, input.email, input.role, token, origin);
			return row;
		});
	} catch (e) {
		if (isUniqueViolation(e)) throw new ApiError(409, 'already_invited', `${input.email} already has an open invitation to this team; resend it from the list below.`, { email: 'Already invited: use Resend in the list.' });
		throw e;
	}
}

async function openOne(teamId: string, id: string) {
	const [row] = await db
		.select()
		.from(invitations)
		.where(and(eq(invitations.id, id), eq(invitations.teamId, teamId), isNull(invitations.acceptedAt), isNull(invitations.revokedAt)));
	if (!row) throw new ApiError(404, 'not_found', 'No such open invitation in this team.');
	return row;
}

/** Send a fresh link: the old link stops working and the lifetime starts again. */
export async function resend(teamId: string, id: string, inviter: Inviter, origin: string): Promise<void> {
	const row = await openOne(teamId, id);
	if (row.role === 'owner' && inviter.role !== 'owner') throw new ApiError(403, 'forbidden', 'Only an owner can resend an owner invitation.');
	const token = newToken();
	await db.transaction(async (tx) => {
		await tx.update(invitations).set({ tokenHash: hashToken(token), sentAt: new Date(), expiresAt: expiry() }).where(eq(invitations.id, row.id));
		await sendLink(teamId, inviter, row.email, row.role, token, origin);
	});
}

export async function revoke(teamId: string, id: string): Promise<void> {
	const row = await openOne(teamId, id);
	await db.update(invitations).set({ revokedAt: new Date() }).where(eq(invitations.id, row.id));
}

export type LinkState = 'open' | 'accepted' | 'revoked' | 'expired';

function stateOf(row: Invitation): LinkState {
	if (row.acceptedAt) return 'accepted';
	if (row.revokedAt) return 'revoked';
	if (row.expiresAt.getTime() <= Date.now()) return 'expired';
	return 'open';
}

/** What the invitation page shows for a link; null when the token matches nothing. */
export async function lookup(token: string) {
	const [row] = await db
		.select({ invitation: invitations, teamName: teams.name })
		.from(invitations)
		.innerJoin(teams, eq(teams.id, invitations.teamId))
		.where(eq(invitations.tokenHash, hashToken(token)));
	if (!row) return null;
	const i = row.invitation;
	return { teamId: i.teamId, teamName: row.teamName, email: i.email, role: i.role, expiresAt: i.expiresAt, state: stateOf(i) };
}

const refusals: Record<Exclude<LinkState, 'open'>, () => ApiError> = {
	accepted: () => new ApiError(410, 'invitation_used', 'This invitation link was already used. Ask a team admin for a new invitation if you still need one.'),
	revoked: () => new ApiError(410, 'invitation_revoked', 'This invitation was withdrawn by a team admin.'),
	expired: () => new ApiError(410, 'invitation_expired', `This invitation link has expired (links work for ${INVITE_HOURS} hours). Ask a team admin to resend it.`)
};

/** Accept a link as the signed-in user: adds the membership with the invited role, once. */
export async function accept(token: string, user: { id: string; email: string }): Promise<{ teamId: string; role: Role; alreadyMember: boolean }> {
	const result = await db.transaction(async (tx) => {
		const [row] = await tx.select().from(invitations).where(eq(invitations.tokenHash, hashToken(token))).for('update');
		if (!row) throw new ApiError(404, 'not_found', 'This invitation link is not valid. Check that the whole link was copied.');
		const st = stateOf(row);
		if (st !== 'open') throw refusals[st]();
		if (row.email !== user.email.toLowerCase()) {
			throw new ApiError(403, 'wrong_address', `This invitation was sent to ${row.email}, but you are signed in as ${user.email}. Sign out and sign in with ${row.email} to accept it.`);
		}
		const added = await tx.insert(memberships).values({ teamId: row.teamId, userId: user.id, role: row.role }).onConflictDoNothing().returning({ role: memberships.role });
		await tx.update(invitations).set({ acceptedAt: new Date(), acceptedBy: user.id }).where(eq(invitations.id, row.id));
		const [m] = added.length ? added : await tx.select({ role: memberships.role }).from(memberships).where(and(eq(memberships.teamId, row.teamId), eq(memberships.userId, user.id)));
		return { teamId: row.teamId, role: m.role, alreadyMember: added.length === 0 };
	});
	if (!result.alreadyMember) await subscription.syncSeatsQuietly(result.teamId);
	return result;
}
