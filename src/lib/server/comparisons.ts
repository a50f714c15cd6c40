/** Saved comparisons: a named list of plans of one team, shared by link with its members. */
import { and, desc, eq, inArray } from 'drizzle-orm';
import { db } from './db/index.js';
import { comparisons, memberships, users } from './db/schema.js';
import * as notifications from './notifications.js';
import * as plans from './plans.js';
import { ApiError } from './http.js';
import { planSchema, type Plan } from '$lib/schemas/plan.js';

export async function list(teamId: string) {
	return db
		.select({ id: comparisons.id, name: comparisons.name, planIds: comparisons.planIds, createdAt: comparisons.createdAt, author: users.email })
		.from(comparisons)
		.leftJoin(users, eq(users.id, comparisons.createdBy))
		.where(eq(comparisons.teamId, teamId))
		.orderBy(desc(comparisons.createdAt));
}

export async function get(id: string) {
	const [row] = await db.select().from(comparisons).where(eq(comparisons.id, id));
	return row ?? null;
}

export async function create(teamId: string, userId: string, name: string, planIds: string[]) {
	const found = await plans.getMany(teamId, planIds);
	if (found.length !== new Set(planIds).size) throw new ApiError(400, 'invalid', 'Invalid planIds: every plan must belong to this team.', { planIds: 'every plan must belong to this team' });
	const [row] = await db.insert(comparisons).values({ teamId, name, planIds: [...new Set(planIds)], createdBy: userId }).returning();
	return row;
}

export async function remove(id: string, teamId: string) {
	await db.delete(comparisons).where(and(eq(comparisons.id, id), eq(comparisons.teamId, teamId)));
}

/** Input paths shown side by side, with a label and unit. */
export const INPUT_ROWS: { path: string; label: string }[] = [
	{ path: 'dataset.rows', label: 'Rows' },
	{ path: 'dataset.features', label: 'Features' },
	{ path: 'dataset.nnzPerRow', label: 'Nonzeros per row' },
	{ path: 'dataset.positiveFraction', label: 'Positive fraction' },
	{ path: 'dataset.valueKind', label: 'Values' },
	{ path: 'dataset.format', label: 'Stored as' },
	{ path: 'dataset.compressed', label: 'Compressed' },
	{ path: 'machine.name', label: 'Machine' },
	{ path: 'machine.ramGiB', label: 'RAM (GiB)' },
	{ path: 'machine.diskMBps', label: 'Disk read (MB/s)' },
	{ path: 'machine.cores', label: 'Cores' },
	{ path: 'machine.coreSpeed', label: 'Core speed' },
	{ path: 'machine.pricePerHour', label: 'Price ($/h)' },
	{ path: 'training.loss', label: 'Loss' },
	{ path: 'training.C', label: 'C' },
	{ path: 'training.tol', label: 'Tolerance' },
	{ path: 'training.cValues', label: 'C values' },
	{ path: 'training.folds', label: 'Folds' },
	{ path: 'deadlineHours', label: 'Deadline (h)' }
];

const at = (plan: Plan, path: string): unknown => path.split('.').reduce<unknown>((o, k) => (o as Record<string, unknown> | undefined)?.[k], plan);

/** The side-by-side table: one column per plan, rows of inputs flagged where the plans differ. */
export async function table(teamId: string, planIds: string[]) {
	const rows = await plans.getMany(teamId, planIds);
	const inputs = rows.map((r) => planSchema.parse(r.input));
	return {
		plans: rows.map((r) => ({
			id: r.id,
			name: r.name,
			projectName: r.projectName,
			projectId: r.projectId,
			recommended: r.recommended,
			p10Seconds: r.p10Seconds,
			p50Seconds: r.p50Seconds,
			p90Seconds: r.p90Seconds,
			cost: r.cost,
			deadlineVerdict: r.deadlineVerdict
		})),
		inputs: INPUT_ROWS.map((row) => {
			const values = inputs.map((p) => at(p, row.path) ?? null);
			return { ...row, values, differs: new Set(values.map((v) => JSON.stringify(v))).size > 1 };
		})
	};
}

/** Tell team members by e-mail that a comparison was shared with them; addresses outside the team are refused. */
export async function share(teamId: string, sharedBy: string, comparison: { id: string; name: string }, emails: string[]) {
	if (emails.length === 0) return;
	const wanted = [...new Set(emails.map((e) => e.toLowerCase()))];
	const members = await db
		.select({ id: users.id, email: users.email })
		.from(memberships)
		.innerJoin(users, eq(users.id, memberships.userId))
		.where(and(eq(memberships.teamId, teamId), inArray(users.email, wanted)));
	const missing = wanted.filter((e) => !members.some((m) => m.email?.toLowerCase() === e));
	if (missing.length) throw new ApiError(400, 'invalid', `Invalid notify: ${missing.join(', ')} ${missing.length > 1 ? 'are not members' : 'is not a member'} of this team.`, { notify: 'only team members can be told' });
	for (const m of members) await notifications.notifyComparisonShared(m.id, sharedBy, comparison.name, `/teams/${teamId}/compare/${comparison.id}`);
}
