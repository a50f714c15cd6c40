/** The team's machine catalog. */
import { and, asc, eq, isNull, sql } from 'drizzle-orm';
import { db } from './db/index.js';
import { isUniqueViolation } from './db/errors.js';
import { machines } from './db/schema.js';
import { ApiError } from './http.js';
import type { Machine } from '$lib/schemas/machine.js';

export async function list(teamId: string, opts: { includeRetired?: boolean } = {}) {
	const where = opts.includeRetired ? eq(machines.teamId, teamId) : and(eq(machines.teamId, teamId), isNull(machines.retiredAt));
	return db.select().from(machines).where(where).orderBy(asc(sql`${machines.retiredAt} is not null`), asc(sql`lower(${machines.name})`));
}

export async function get(id: string) {
	const [row] = await db.select().from(machines).where(eq(machines.id, id));
	return row ?? null;
}

const taken = (name: string) => new ApiError(409, 'conflict', `A machine named "${name}" is already in the catalog.`, { name: 'This name is taken in this team.' });

export async function create(teamId: string, userId: string, name: string, profile: Machine, source: 'manual' | 'probe') {
	try {
		const [row] = await db.insert(machines).values({ teamId, name, profile: { ...profile, name }, source, createdBy: userId }).returning();
		return row;
	} catch (e) {
		if (isUniqueViolation(e)) throw taken(name);
		throw e;
	}
}

export async function update(id: string, change: { name?: string; profile?: Machine; retired?: boolean }) {
	const current = await get(id);
	if (!current) return null;
	const name = change.name ?? current.name;
	try {
		const [row] = await db
			.update(machines)
			.set({
				name,
				profile: { ...((change.profile ?? current.profile) as Machine), name },
				...(change.retired !== undefined && { retiredAt: change.retired ? new Date() : null }),
				updatedAt: new Date()
			})
			.where(eq(machines.id, id))
			.returning();
		return row;
	} catch (e) {
		if (isUniqueViolation(e)) throw taken(name);
		throw e;
	}
}
