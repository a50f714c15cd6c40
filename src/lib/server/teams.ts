/** Teams and memberships. */
import { and, asc, eq } from 'drizzle-orm';
import { db } from './db/index.js';
import { memberships, teams, type Role } from './db/schema.js';

export interface TeamMembership {
	id: string;
	name: string;
	personal: boolean;
	role: Role;
}

/** The personal team every new user gets, with them as owner. */
export async function createPersonal(user: { id: string; name?: string | null; email?: string | null }) {
	const label = user.name || user.email?.split('@')[0] || 'My';
	return db.transaction(async (tx) => {
		const [team] = await tx.insert(teams).values({ name: `${label}'s team`, personal: true }).returning();
		await tx.insert(memberships).values({ teamId: team.id, userId: user.id, role: 'owner' });
		return team;
	});
}

export async function listForUser(userId: string): Promise<TeamMembership[]> {
	return db
		.select({ id: teams.id, name: teams.name, personal: teams.personal, role: memberships.role })
		.from(memberships)
		.innerJoin(teams, eq(teams.id, memberships.teamId))
		.where(eq(memberships.userId, userId))
		.orderBy(asc(teams.personal), asc(teams.name));
}

/** The user's membership in a team, or null when they are not a member (or the team does not exist). */
export async function membership(teamId: string, userId: string): Promise<TeamMembership | null> {
	const rows = await db
		.select({ id: teams.id, name: teams.name, personal: teams.personal, role: memberships.role })
		.from(memberships)
		.innerJoin(teams, eq(teams.id, memberships.teamId))
		.where(and(eq(memberships.teamId, teamId), eq(memberships.userId, userId)))
		.limit(1);
	return rows[0] ?? null;
}
