/**
 * Calibration jobs for the web app: enqueue (or reuse a fresh record of the same shape), status,
 * cancel, retry. The worker (jobs/worker.ts) does the running.
 */
import { eq } from 'drizzle-orm';
import type PgBoss from 'pg-boss';
import { env } from '$env/dynamic/private';
import { db } from '../db/index.js';
import { plans, type CalibrationJob } from '../db/schema.js';
import { ApiError } from '../http.js';
import type { Plan } from '$lib/schemas/plan.js';
import { shapeKey, sampleOf, MAX_AGE_DAYS } from '../calibrations.js';
import * as limits from '../billing/limits.js';
import { QUEUE_CALIBRATE, QUEUE_PARSE_UPLOAD } from './config.js';
import { startBoss } from './queue.js';
import * as store from './store.js';

/** a calibration record is reused by plans of the same shape until it is this old (the shape and age rule live in calibrations.ts) */
export const REUSE_DAYS = MAX_AGE_DAYS;

let boss: Promise<PgBoss> | null = null;
/** The web app's queue handle, started on first use. */
function queue(): Promise<PgBoss> {
	boss ??= startBoss(env.DATABASE_URL!).catch((e) => {
		boss = null;
		throw e;
	});
	return boss;
}

export async function send(name: typeof QUEUE_CALIBRATE | typeof QUEUE_PARSE_UPLOAD, data: object): Promise<string | null> {
	return (await queue()).send(name, data);
}

export const get = (id: string) => store.get(db, id);
export const latestForPlan = (planId: string) => store.latestForPlan(db, planId);

/** A plan's team and input (straight from the table, so this works beside the plans module). */
export async function planFor(id: string) {
	const rows = await db.select({ id: plans.id, teamId: plans.teamId, input: plans.input }).from(plans).where(eq(plans.id, id)).limit(1);
	return rows[0] ?? null;
}

export interface Enqueued {
	job: CalibrationJob;
	/** a fresh calibration of the same shape was reused instead of running a new one */
	reused: { calibrationId: string; createdAt: Date } | null;
	/** a queued or running job of the same shape was joined */
	joined: boolean;
}

/**
 * Queue a calibration, on synthetic data or on one of the team's parsed samples (`upload`, checked by
 * uploads.forCalibration). Reuse and joining keep the data apart: a synthetic request takes only
 * synthetic records and jobs of the shape, a sample request only those of the same upload.
 */
export async function enqueue(o: { teamId: string; planId: string; plan: Plan; userId: string; force?: boolean; upload?: { id: string } }): Promise<Enqueued> {
	const key = shapeKey(o.plan);
	const uploadId = o.upload?.id ?? null;
	if (!o.force) {
		const fresh = await store.freshCalibration(db, o.teamId, key, REUSE_DAYS, uploadId);
		if (fresh) {
			const job = await store.insert(db, {
				teamId: o.teamId,
				planId: o.planId,
				uploadId,
				shapeKey: key,
				input: o.plan,
				status: 'done',
				phase: uploadId ? 'reused a calibration of the same shape on the same sample' : 'reused a calibration of the same shape',
				fraction: 1,
				calibrationId: fresh.id,
				createdBy: o.userId
			});
			return { job, reused: { calibrationId: fresh.id, createdAt: fresh.createdAt }, joined: false };
		}
	}
	const active = await store.activeJob(db, o.teamId, key, uploadId);
	if (active) return { job: active, reused: null, joined: true };
	await limits.assert(o.teamId, 'calibrations');
	const job = await store.insert(db, { teamId: o.teamId, planId: o.planId, uploadId, shapeKey: key, input: o.plan, createdBy: o.userId });
	await submit(job);
	return { job: (await store.get(db, job.id))!, reused: null, joined: false };
}

async function submit(job: CalibrationJob) {
	try {
		await store.setQueueJob(db, job.id, await send(QUEUE_CALIBRATE, { calibrationJobId: job.id }));
	} catch (e) {
		await store.failed(db, job.id, 'the queue could not take the job; try again', true);
		throw e;
	}
}

export async function cancel(job: CalibrationJob): Promise<CalibrationJob> {
	const row = await store.cancel(db, job.id);
	if (!row) throw new ApiError(409, 'conflict', `The calibration is ${job.status}; only a queued or running one can be cancelled.`);
	// a running worker sees the cancel at its next heartbeat; a queued job must not start at all
	if (row.queueJobId) await (await queue()).cancel(QUEUE_CALIBRATE, row.queueJobId).catch(() => {});
	return row;
}

export async function retry(job: CalibrationJob): Promise<CalibrationJob> {
	const row = await store.requeue(db, job.id);
	if (!row) throw new ApiError(409, 'conflict', `The calibration is ${job.status}; only a failed or cancelled one can be retried.`);
	await submit(row);
	return (await store.get(db, job.id))!;
}

/** The job as the API shows it; with the record when asked and done. */
export async function view(job: CalibrationJob, withRecord = false) {
	const cal = job.calibrationId ? await store.calibration(db, job.calibrationId) : null;
	return {
		id: job.id,
		planId: job.planId,
		teamId: job.teamId,
		status: job.status,
		phase: job.phase,
		fraction: job.fraction,
		error: job.error,
		attempts: job.attempts,
		createdAt: job.createdAt,
		updatedAt: job.updatedAt,
		calibrationId: job.calibrationId,
		// a record older than the job was not made by it
		reused: cal ? cal.createdAt.getTime() < job.createdAt.getTime() : false,
		uploadId: job.uploadId,
		calibration: cal ? { id: cal.id, createdAt: cal.createdAt, source: cal.source, sample: sampleOf(cal.record), ...(withRecord && { record: cal.record }) } : null
	};
}

export type JobView = Awaited<ReturnType<typeof view>>;
