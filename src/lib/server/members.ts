/**
 * Team members: list, change roles, remove, leave. A team always keeps at least one owner,
 * checked under a row lock on the owners so two concurrent changes cannot both remove the last one.
 */
import { and, asc, eq } from 'drizzle-orm';
import { db } from './db/index.js';
import { memberships, users, type Role } from './db/schema.js';
import { ApiError } from './http.js';
import * as subscription from './billing/subscription.js';

type Tx = Parameters<Parameters<typeof db.transaction>[0]>[0];

export interface Actor {
	id: string;
	role: Role;
}

export async function list(teamId: string) {
	return db
		.select({ userId: memberships.userId, email: users.email, name: users.name, role: memberships.role, joinedAt: memberships.createdAt })
		.from(memberships)
		.innerJoin(users, eq(users.id, memberships.userId))
		.where(eq(memberships.teamId, teamId))
		.orderBy(asc(users.email));
}

async function target(tx: Tx, teamId: string, userId: string) {
	const [m] = await tx
		.select({ role: memberships.role, email: users.email })
		.from(memberships)
		.innerJoin(users, eq(users.id, memberships.userId))
		.where(and(eq(memberships.teamId, teamId), eq(memberships.userId, userId)));
	if (!m) throw new ApiError(404, 'not_found', 'No such member in this team.');
	return m;
}

/** Lock the owner rows and return how many owners the team has. */
async function lockOwners(tx: Tx, teamId: string): Promise<number> {
	const owners = await tx
		.select({ userId: memberships.userId })
		.from(memberships)
		.where(and(eq(memberships.teamId, teamId), eq(memberships.role, 'owner')))
		.for('update');
	return owners.length;
}

function ownerOnly(actor: Actor, what: string) {
	if (actor.role !== 'owner') throw new ApiError(403, 'forbidden', `Only an owner can ${what}.`);
}

export async function changeRole(teamId: string, actor: Actor, userId: string, role: Role): Promise<void> {
	await db.transaction(async (tx) => {
		const owners = await lockOwners(tx, teamId);
		const m = await target(tx, teamId, userId);
		if (m.role === role) return;
		if (m.role === 'owner') ownerOnly(actor, "change an owner's role");
		if (role === 'owner') ownerOnly(actor, 'make someone an owner');
		if (m.role === 'owner' && owners === 1) {
			throw new ApiError(409, 'last_owner', `${m.email} is the only owner of this team and cannot be demoted. Make another member owner first.`);
		}
		await tx.update(memberships).set({ role }).where(and(eq(memberships.teamId, teamId), eq(memberships.userId, userId)));
	});
}

/** Remove a member (admins and owners), or leave (anyone, for themselves). */
export async function remove(teamId: string, actor: Actor, userId: string): Promise<void> {
	const self = actor.id === userId;
	await db.transaction(async (tx) => {
		const owners = await lockOwners(tx, teamId);
		const m = await target(tx, teamId, userId);
		if (!self && m.role === 'owner') ownerOnly(actor, 'remove an owner');
		if (m.role === 'owner' && owners === 1) {
			throw new ApiError(
				409,
				'last_owner',
				self ? 'You are the only owner of this team, so you cannot leave it. Make another member owner first.' : `${m.email} is the only owner of this team and cannot be removed.`
			);
		}
		await tx.delete(memberships).where(and(eq(memberships.teamId, teamId), eq(memberships.userId, userId)));
	});
	await subscription.syncSeatsQuietly(teamId);
}
