/**
 * Calibration jobs and records in PostgreSQL, for the web app and the worker alike (each passes
 * its own Drizzle client). A job's row is what users see; the queue only carries its id.
 */
import { and, desc, eq, gt, gte, inArray, isNull, lt, sql, TransactionRollbackError } from 'drizzle-orm';
import type { Db } from '../db/client.js';
import { calibrationJobs, calibrations, type CalibrationJob } from '../db/schema.js';

const ACTIVE = ['queued', 'running'] as const;
const ENDED = ['failed', 'cancelled'] as const;

export async function get(db: Db, id: string): Promise<CalibrationJob | null> {
	const rows = await db.select().from(calibrationJobs).where(eq(calibrationJobs.id, id)).limit(1);
	return rows[0] ?? null;
}

/**
 * The newest calibration of this shape in the team that is younger than maxAgeDays, on the same data:
 * synthetic when uploadId is null, else one made on that very upload (records of other samples never serve).
 */
export async function freshCalibration(db: Db, teamId: string, shapeKey: string, maxAgeDays: number, uploadId: string | null = null) {
	const since = new Date(Date.now() - maxAgeDays * 86_400_000);
	const rows = await db
		.select()
		.from(calibrations)
		.where(and(eq(calibrations.teamId, teamId), eq(calibrations.shapeKey, shapeKey), gt(calibrations.createdAt, since), sameData(uploadId)))
		.orderBy(desc(calibrations.createdAt))
		.limit(1);
	return rows[0] ?? null;
}

const sameData = (uploadId: string | null) =>
	uploadId ? and(eq(calibrations.source, 'sample'), eq(calibrations.uploadId, uploadId)) : eq(calibrations.source, 'synthetic');

/** A queued or running job of this shape in the team on the same data (synthetic, or the same upload), so a second request joins it. */
export async function activeJob(db: Db, teamId: string, shapeKey: string, uploadId: string | null = null) {
	const rows = await db
		.select()
		.from(calibrationJobs)
		.where(
			and(
				eq(calibrationJobs.teamId, teamId),
				eq(calibrationJobs.shapeKey, shapeKey),
				inArray(calibrationJobs.status, [...ACTIVE]),
				uploadId ? eq(calibrationJobs.uploadId, uploadId) : isNull(calibrationJobs.uploadId)
			)
		)
		.orderBy(desc(calibrationJobs.createdAt))
		.limit(1);
	return rows[0] ?? null;
}

/** The plan's newest job, or null. */
export async function latestForPlan(db: Db, planId: string): Promise<CalibrationJob | null> {
	const rows = await db.select().from(calibrationJobs).where(eq(calibrationJobs.planId, planId)).orderBy(desc(calibrationJobs.createdAt)).limit(1);
	return rows[0] ?? null;
}

export async function insert(db: Db, values: typeof calibrationJobs.$inferInsert): Promise<CalibrationJob> {
	const [row] = await db.insert(calibrationJobs).values(values).returning();
	return row;
}

export async function setQueueJob(db: Db, id: string, queueJobId: string | null) {
	await db.update(calibrationJobs).set({ queueJobId, updatedAt: new Date() }).where(eq(calibrationJobs.id, id));
}

/** A worker takes the job: null when it was cancelled or finished meanwhile. */
export async function start(db: Db, id: string, queueJobId: string): Promise<CalibrationJob | null> {
	const [row] = await db
		.update(calibrationJobs)
		.set({ status: 'running', phase: 'starting', queueJobId, attempts: sql`${calibrationJobs.attempts} + 1`, error: null, updatedAt: new Date() })
		.where(and(eq(calibrationJobs.id, id), inArray(calibrationJobs.status, [...ACTIVE])))
		.returning();
	return row ?? null;
}

/** This attempt still owns the job: running, and not handed to another worker since. */
const owns = (id: string, attempt: number) => and(eq(calibrationJobs.id, id), eq(calibrationJobs.status, 'running'), eq(calibrationJobs.attempts, attempt));

/** Progress and heartbeat; false when this attempt no longer owns the job (cancelled, or handed on). */
export async function progress(db: Db, id: string, attempt: number, phase: string, fraction: number): Promise<boolean> {
	const rows = await db
		.update(calibrationJobs)
		.set({ phase, fraction: Math.max(0, Math.min(1, fraction)), updatedAt: new Date() })
		.where(owns(id, attempt))
		.returning({ id: calibrationJobs.id });
	return rows.length === 1;
}

/**
 * Running jobs whose heartbeat stopped (their worker died): each is claimed by exactly one
 * caller, back to queued, or failed for good after MAX_ATTEMPTS runs.
 */
export async function claimStale(db: Db, staleSeconds: number, maxAttempts: number) {
	const stale = and(eq(calibrationJobs.status, 'running'), lt(calibrationJobs.updatedAt, sql`now() - make_interval(secs => ${staleSeconds})`));
	const lost = `its worker stopped answering for ${staleSeconds} s`;
	const retried = await db
		.update(calibrationJobs)
		.set({ status: 'queued', phase: `retrying: ${lost}`, updatedAt: new Date() })
		.where(and(stale, lt(calibrationJobs.attempts, maxAttempts)))
		.returning();
	const given = await db
		.update(calibrationJobs)
		.set({ status: 'failed', phase: 'failed', error: `${lost}, ${maxAttempts} times; retry when a worker runs`, updatedAt: new Date() })
		.where(and(stale, gte(calibrationJobs.attempts, maxAttempts)))
		.returning();
	return { retried, given };
}

/** Store the record and mark the job done in one transaction; null when the job was cancelled meanwhile. */
export async function finish(db: Db, job: CalibrationJob, record: unknown, source: 'synthetic' | 'sample') {
	// job is the row as this attempt started it; its attempts number says which attempt may finish
	return db.transaction(async (tx) => {
		const [cal] = await tx
			.insert(calibrations)
			.values({ teamId: job.teamId, shapeKey: job.shapeKey, source, uploadId: job.uploadId, record })
			.returning({ id: calibrations.id });
		const done = await tx
			.update(calibrationJobs)
			.set({ status: 'done', phase: 'done', fraction: 1, error: null, calibrationId: cal.id, updatedAt: new Date() })
			.where(owns(job.id, job.attempts))
			.returning({ id: calibrationJobs.id });
		if (done.length === 0) {
			tx.rollback();
		}
		return cal.id;
	}).catch((e: unknown) => {
		if (e instanceof TransactionRollbackError) return null;
		throw e;
	});
}

/** A failed run: retried later (back to queued) or failed for good with its reason. */
export async function failed(db: Db, id: string, reason: string, final: boolean) {
	await db
		.update(calibrationJobs)
		.set(final ? { status: 'failed', phase: 'failed', error: reason, updatedAt: new Date() } : { status: 'queued', phase: `retrying after: ${reason}`, updatedAt: new Date() })
		.where(and(eq(calibrationJobs.id, id), inArray(calibrationJobs.status, [...ACTIVE])));
}

export async function cancel(db: Db, id: string): Promise<CalibrationJob | null> {
	const [row] = await db
		.update(calibrationJobs)
		.set({ status: 'cancelled', phase: 'cancelled', updatedAt: new Date() })
		.where(and(eq(calibrationJobs.id, id), inArray(calibrationJobs.status, [...ACTIVE])))
		.returning();
	return row ?? null;
}

/** Back to the queue after a failure or a cancel; null when the job is not in such a state. */
export async function requeue(db: Db, id: string): Promise<CalibrationJob | null> {
	const [row] = await db
		.update(calibrationJobs)
		.set({ status: 'queued', phase: 'waiting for a worker', fraction: 0, error: null, attempts: 0, updatedAt: new Date() })
		.where(and(eq(calibrationJobs.id, id), inArray(calibrationJobs.status, [...ENDED])))
		.returning();
	return row ?? null;
}

export async function calibration(db: Db, id: string) {
	const rows = await db.select().from(calibrations).where(eq(calibrations.id, id)).limit(1);
	return rows[0] ?? null;
}
