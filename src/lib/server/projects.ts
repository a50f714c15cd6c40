/** Projects: named groups of plans inside a team. */
import { and, asc, eq, sql } from 'drizzle-orm';
import { db } from './db/index.js';
import { isUniqueViolation } from './db/errors.js';
import { projects, users } from './db/schema.js';
import { ApiError } from './http.js';
import type { ProjectCreate, ProjectUpdate } from '$lib/schemas/project.js';
import * as limits from './billing/limits.js';

const columns = {
	id: projects.id,
	teamId: projects.teamId,
	name: projects.name,
	description: projects.description,
	createdAt: projects.createdAt,
	updatedAt: projects.updatedAt,
	createdBy: users.email
};

export type ProjectRow = Awaited<ReturnType<typeof list>>[number];

export async function list(teamId: string) {
	return db.select(columns).from(projects).leftJoin(users, eq(users.id, projects.createdBy)).where(eq(projects.teamId, teamId)).orderBy(asc(sql`lower(${projects.name})`));
}

export async function get(id: string) {
	const rows = await db.select(columns).from(projects).leftJoin(users, eq(users.id, projects.createdBy)).where(eq(projects.id, id)).limit(1);
	return rows[0] ?? null;
}

const duplicate = (name: string) => new ApiError(409, 'conflict', `A project named "${name}" already exists in this team.`, { name: 'This name is taken in this team.' });


export async function create(teamId: string, userId: string, input: ProjectCreate) {
	try {
		// the Free project limit is checked under a per-team lock, in the transaction that inserts
		const [row] = await limits.within(teamId, 'projects', 'name', (tx) =>
			tx.insert(projects).values({ teamId, createdBy: userId, name: input.name, description: input.description }).returning({ id: projects.id })
		);
		return (await get(row.id))!;
	} catch (e) {
		if (isUniqueViolation(e)) throw duplicate(input.name);
		throw e;
	}
}

export async function update(id: string, input: ProjectUpdate) {
	try {
		await db
			.update(projects)
			.set({ ...(input.name !== undefined && { name: input.name }), ...(input.description !== undefined && { description: input.description }), updatedAt: new Date() })
			.where(eq(projects.id, id));
	} catch (e) {
		if (isUniqueViolation(e)) throw duplicate(input.name ?? '');
		throw e;
	}
	return (await get(id))!;
}

export async function remove(id: string, teamId: string) {
	await db.delete(projects).where(and(eq(projects.id, id), eq(projects.teamId, teamId)));
}
