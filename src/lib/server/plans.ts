/** Plans: saved questions with their estimate snapshots and a revision per save. */
import { and, asc, count, desc, eq, ilike, inArray, isNull, sql, type SQL } from 'drizzle-orm';
import { alias } from 'drizzle-orm/pg-core';
import { db } from './db/index.js';
import { isUniqueViolation } from './db/errors.js';
import { planRevisions, plans, projects, users } from './db/schema.js';
import { ApiError } from './http.js';
import * as estimates from './estimates.js';
import { planSchema, type Plan } from '$lib/schemas/plan.js';
import type { PlanListQuery } from '$lib/schemas/plan-api.js';
import type { EstimateResponse } from './estimates.js';

const author = alias(users, 'author');

const columns = {
	id: plans.id,
	projectId: plans.projectId,
	projectName: projects.name,
	teamId: plans.teamId,
	name: plans.name,
	recommended: plans.recommended,
	p10Seconds: plans.p10Seconds,
	p50Seconds: plans.p50Seconds,
	p90Seconds: plans.p90Seconds,
	cost: plans.cost,
	deadlineVerdict: plans.deadlineVerdict,
	author: author.email,
	createdAt: plans.createdAt,
	updatedAt: plans.updatedAt
};

export type PlanSummary = Awaited<ReturnType<typeof listPage>>['rows'][number];

// Escape LIKE wildcards so a filter is matched as plain text.
const likeText = (q: string) => `%${q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;

const sortColumns = {
	name: sql`lower(${plans.name})`,
	recommended: plans.recommended,
	p50: plans.p50Seconds,
	range: sql`${plans.p90Seconds} / nullif(${plans.p10Seconds}, 0)`,
	cost: plans.cost,
	verdict: plans.deadlineVerdict,
	author: author.email,
	updated: plans.updatedAt
} satisfies Record<PlanListQuery['sort'], unknown>;

/** One page of a project's plans, sorted and filtered on the server. */
export async function listPage(projectId: string, q: PlanListQuery) {
	const where: SQL[] = [eq(plans.projectId, projectId)];
	if (q.q) where.push(ilike(plans.name, likeText(q.q)));
	if (q.recommended === 'none') where.push(isNull(plans.recommended));
	else if (q.recommended) where.push(eq(plans.recommended, q.recommended));
	if (q.verdict === 'none') where.push(isNull(plans.deadlineVerdict));
	else if (q.verdict) where.push(eq(plans.deadlineVerdict, q.verdict));
	const order = q.dir === 'asc' ? asc(sortColumns[q.sort]) : sql`${sortColumns[q.sort]} desc nulls last`;
	const [rows, [{ total }]] = await Promise.all([
		db
			.select(columns)
			.from(plans)
			.innerJoin(projects, eq(projects.id, plans.projectId))
			.leftJoin(author, eq(author.id, plans.createdBy))
			.where(and(...where))
			.orderBy(order, asc(plans.id))
			.limit(q.pageSize)
			.offset((q.page - 1) * q.pageSize),
		db.select({ total: count() }).from(plans).where(and(...where))
	]);
	return { rows, total, page: q.page, pageSize: q.pageSize, pages: Math.max(1, Math.ceil(total / q.pageSize)) };
}

/** Every plan of a team, across projects (for comparing). */
export async function listForTeam(teamId: string) {
	return db
		.select(columns)
		.from(plans)
		.innerJoin(projects, eq(projects.id, plans.projectId))
		.leftJoin(author, eq(author.id, plans.createdBy))
		.where(eq(plans.teamId, teamId))
		.orderBy(asc(sql`lower(${projects.name})`), asc(sql`lower(${plans.name})`));
}

export async function get(id: string) {
	const [row] = await db
		.select({ ...columns, input: plans.input, estimate: plans.estimate, calibrationId: plans.calibrationId })
		.from(plans)
		.innerJoin(projects, eq(projects.id, plans.projectId))
		.leftJoin(author, eq(author.id, plans.createdBy))
		.where(eq(plans.id, id));
	return row ?? null;
}

export type PlanDetail = NonNullable<Awaited<ReturnType<typeof get>>>;

/** Several plans of one team, in the order asked; ids of other teams are dropped. */
export async function getMany(teamId: string, ids: string[]) {
	if (ids.length === 0) return [];
	const rows = await db
		.select({ ...columns, input: plans.input, estimate: plans.estimate })
		.from(plans)
		.innerJoin(projects, eq(projects.id, plans.projectId))
		.leftJoin(author, eq(author.id, plans.createdBy))
		.where(and(eq(plans.teamId, teamId), inArray(plans.id, ids)));
	return ids.map((id) => rows.find((r) => r.id === id)).filter((r) => r !== undefined);
}

export async function revisions(planId: string) {
	return db
		.select({ id: planRevisions.id, p50Seconds: planRevisions.p50Seconds, calibrationId: planRevisions.calibrationId, createdAt: planRevisions.createdAt, author: users.email, estimate: planRevisions.estimate })
		.from(planRevisions)
		.leftJoin(users, eq(users.id, planRevisions.createdBy))
		.where(eq(planRevisions.planId, planId))
		.orderBy(desc(planRevisions.createdAt));
}

/** The columns the table sorts on, copied from the recommended (or else fastest) strategy's sweep. */
function snapshotColumns(res: EstimateResponse) {
	const e = res.estimate;
	const pick = e.strategies.find((s) => s.strategy === e.recommended) ?? null;
	return {
		estimate: res as unknown as Record<string, unknown>,
		calibrationId: res.calibration.id === 'built-in' ? null : res.calibration.id,
		recommended: e.recommended,
		p10Seconds: pick?.sweep.wallSeconds.p10 ?? null,
		p50Seconds: pick?.sweep.wallSeconds.p50 ?? null,
		p90Seconds: pick?.sweep.wallSeconds.p90 ?? null,
		cost: pick?.sweep.cost?.p50 ?? null,
		deadlineVerdict: pick?.deadline?.verdict ?? null
	};
}

const duplicateName = (name: string) => new ApiError(409, 'conflict', `A plan named "${name}" already exists in this project.`, { name: 'This name is taken in this project.' });

export async function create(input: { teamId: string; projectId: string; userId: string; name: string; plan: Plan; calibrationId?: string | null }) {
	const res = await estimates.forPlan(input.teamId, input.plan, input.calibrationId);
	const snap = snapshotColumns(res);
	try {
		return await db.transaction(async (tx) => {
			const [row] = await tx
				.insert(plans)
				.values({ teamId: input.teamId, projectId: input.projectId, name: input.name, input: { ...input.plan, name: input.name }, createdBy: input.userId, updatedBy: input.userId, ...snap })
				.returning({ id: plans.id });
			await tx.insert(planRevisions).values({ planId: row.id, input: { ...input.plan, name: input.name }, estimate: snap.estimate, calibrationId: snap.calibrationId, p50Seconds: snap.p50Seconds, createdBy: input.userId });
			return row.id;
		});
	} catch (e) {
		if (isUniqueViolation(e)) throw duplicateName(input.name);
		throw e;
	}
}

/** Save new inputs (or a new name); every save with new inputs keeps a revision. */
export async function update(existing: PlanDetail, userId: string, change: { name?: string; plan?: Plan; calibrationId?: string | null }) {
	const name = change.name ?? existing.name;
	const plan = change.plan ?? planSchema.parse({ ...(existing.input as object), name });
	const res = await estimates.forPlan(existing.teamId, plan, change.calibrationId === undefined ? existing.calibrationId : change.calibrationId);
	const snap = snapshotColumns(res);
	try {
		await db.transaction(async (tx) => {
			await tx.update(plans).set({ name, input: { ...plan, name }, updatedBy: userId, updatedAt: new Date(), ...snap }).where(eq(plans.id, existing.id));
			await tx.insert(planRevisions).values({ planId: existing.id, input: { ...plan, name }, estimate: snap.estimate, calibrationId: snap.calibrationId, p50Seconds: snap.p50Seconds, createdBy: userId });
		});
	} catch (e) {
		if (isUniqueViolation(e)) throw duplicateName(name);
		throw e;
	}
}

/** A free "name (copy n)" in the project. */
async function copyName(projectId: string, base: string) {
	const taken = new Set((await db.select({ name: plans.name }).from(plans).where(eq(plans.projectId, projectId))).map((r) => r.name.toLowerCase()));
	for (let i = 1; ; i++) {
		const name = i === 1 ? `${base} (copy)` : `${base} (copy ${i})`;
		if (!taken.has(name.toLowerCase())) return name;
	}
}

export async function duplicate(existing: PlanDetail, userId: string, name?: string) {
	const plan = planSchema.parse(existing.input);
	return create({ teamId: existing.teamId, projectId: existing.projectId, userId, name: name ?? (await copyName(existing.projectId, existing.name)), plan, calibrationId: existing.calibrationId });
}

export async function remove(id: string) {
	await db.delete(plans).where(eq(plans.id, id));
}

/** PLAN.json: exactly the plan schema, so `loadline estimate --plan` accepts it. */
export function planJson(p: PlanDetail): Plan {
	return planSchema.parse({ ...(p.input as object), name: p.name });
}

const csvCell = (v: unknown) => {
	const s = v === null || v === undefined ? '' : v instanceof Date ? v.toISOString() : String(v);
	// Quote always; neutralise spreadsheet formulas by prefixing a quote.
	const safe = /^[=+\-@]/.test(s) ? `'${s}` : s;
	return `"${safe.replace(/"/g, '""')}"`;
};

export async function csv(projectId: string): Promise<string> {
	const rows = await db
		.select({ ...columns, input: plans.input })
		.from(plans)
		.innerJoin(projects, eq(projects.id, plans.projectId))
		.leftJoin(author, eq(author.id, plans.createdBy))
		.where(eq(plans.projectId, projectId))
		.orderBy(asc(sql`lower(${plans.name})`));
	const head = ['name', 'recommended', 'sweep_p10_seconds', 'sweep_p50_seconds', 'sweep_p90_seconds', 'sweep_cost_p50', 'deadline_verdict', 'rows', 'features', 'nnz_per_row', 'ram_gib', 'disk_mbps', 'loss', 'C', 'author', 'updated'];
	const lines = rows.map((r) => {
		const p = r.input as Plan;
		return [r.name, r.recommended, r.p10Seconds, r.p50Seconds, r.p90Seconds, r.cost, r.deadlineVerdict, p.dataset.rows, p.dataset.features, p.dataset.nnzPerRow, p.machine.ramGiB, p.machine.diskMBps, p.training.loss, p.training.C, r.author, r.updatedAt].map(csvCell).join(',');
	});
	return [head.join(','), ...lines].join('\r\n') + '\r\n';
}
