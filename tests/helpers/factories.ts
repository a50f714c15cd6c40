/** Test data straight into the throwaway database: users, teams with members, projects. */
import { inject } from 'vitest';
import { createDb } from '../../src/lib/server/db/client.js';
import { memberships, projects, teams, users, type Role } from '../../src/lib/server/db/schema.js';

let handle: ReturnType<typeof createDb> | null = null;
export function db() {
	handle ??= createDb(inject('databaseUrl'), 2);
	return handle.db;
}
export async function closeDb() {
	await handle?.client.end();
	handle = null;
}

let counter = 0;
export const unique = (prefix: string) => `${prefix}-${Date.now().toString(36)}-${(counter++).toString(36)}`;

export async function makeUser(label = 'user') {
	const email = `${unique(label)}@example.org`;
	const [u] = await db().insert(users).values({ email, name: label }).returning();
	return u;
}

export async function makeTeam(name = unique('team')) {
	const [t] = await db().insert(teams).values({ name }).returning();
	return t;
}

export async function addMember(teamId: string, userId: string, role: Role) {
	await db().insert(memberships).values({ teamId, userId, role });
}

export async function makeProject(teamId: string, name = unique('project')) {
	const [p] = await db().insert(projects).values({ teamId, name }).returning();
	return p;
}
