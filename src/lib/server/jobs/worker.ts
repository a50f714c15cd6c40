/**
 * The queue consumer: calibrations and upload parsing. Any number of these may run against one
 * database. A calibration runs in a thread; every second the worker writes its progress (the
 * heartbeat) and sees a cancel. A worker that dies mid-job stops the heartbeat: after
 * LOADLINE_JOB_STALE_SECONDS any worker's sweep fails that queue job, and pg-boss hands it on
 * as a retry. pg-boss's own expiry (LOADLINE_JOB_EXPIRE_SECONDS) is the backstop.
 */
import type PgBoss from 'pg-boss';
import { createDb, type Db } from '../db/client.js';
import { parsePlan } from '../../schemas/plan.js';
import { MAX_ATTEMPTS, QUEUE_CALIBRATE, QUEUE_PARSE_UPLOAD, queueSettings } from './config.js';
import { startBoss } from './queue.js';
import { runCalibration } from './run-calibration.js';
import * as store from './store.js';
import * as notify from './notify.js';
import { parseUploadJob } from '../uploads/parse-job.js';
import { sampleSource } from '../uploads/sample-source.js';

export interface CalibrateJobData {
	calibrationJobId: string;
}
export interface ParseJobData {
	uploadId: string;
}

type Log = (line: string) => void;
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/** Try a database write a few times: PostgreSQL may be restarting. */
async function persist<T>(what: () => Promise<T>, tries = 15): Promise<T> {
	for (let i = 1; ; i++) {
		try {
			return await what();
		} catch (e) {
			if (i >= tries) throw e;
			await sleep(Math.min(4000, 250 * i));
		}
	}
}

export async function calibrateJob(db: Db, job: PgBoss.JobWithMetadata<CalibrateJobData>, log: Log): Promise<void> {
	const id = job.data.calibrationJobId;
	const row = await store.start(db, id, job.id);
	if (!row) return log(`calibration ${id}: cancelled or finished before it started`);
	const parsed = parsePlan(row.input);
	if (!parsed.ok) {
		await store.failed(db, id, `the plan is invalid: ${parsed.errors.map((e) => e.message).join('; ')}`, true);
		return;
	}
	// a calibration on an uploaded sample: the upload must still be there and parsed
	const sample = row.uploadId ? await sampleSource(db, row.uploadId, row.teamId) : undefined;
	if (typeof sample === 'string') {
		await store.failed(db, id, sample, true);
		return log(`calibration ${id}: failed (${sample})`);
	}
	const s = queueSettings();
	const started = Date.now();
	let phase = 'starting';
	const running = runCalibration(parsed.plan, { budgetSeconds: s.budgetSeconds, maxRows: s.maxRows }, (p, message) => (phase = `${p}: ${message}`), sample);
	// the engine reports at phase changes; between them the bar follows the time budget, as the engine's own fraction does
	const beat = setInterval(async () => {
		const fraction = Math.min(0.99, (Date.now() - started) / 1000 / s.budgetSeconds);
		const alive = await store.progress(db, id, row.attempts, phase, fraction).catch(() => true);
		if (!alive) running.stop();
	}, 1000);
	let record: unknown | null;
	try {
		record = await running.result;
	} catch (err) {
		await persist(() => store.failed(db, id, `calibration failed: ${(err as Error).message}`, true));
		log(`calibration ${id}: failed (${(err as Error).message})`);
		return;
	} finally {
		clearInterval(beat);
	}
	if (record === null) return log(`calibration ${id}: cancelled or handed to another worker`);
	const calibrationId = await persist(() => store.finish(db, row, record, row.uploadId ? 'sample' : 'synthetic'));
	log(`calibration ${id}: ${calibrationId ? `done in ${((Date.now() - started) / 1000).toFixed(1)} s` : 'cancelled before it could be stored'}`);
	if (!calibrationId) return;
	// the mail is a courtesy: failing to send it never fails the job
	await notify
		.calibrationDone(db, row)
		.then((r) => log(`calibration ${id}: mail ${r.replace('_', ' ')}`))
		.catch((err) => log(`calibration ${id}: mail not sent (${(err as Error).message})`));
}

export interface WorkerHandle {
	stop: () => Promise<void>;
}

export async function runWorker(url: string, log: Log = console.log): Promise<WorkerHandle> {
	const { db, client } = createDb(url, 4);
	const boss = await startBoss(url, { worker: true, onError: (err) => log(`queue error: ${err.message}`) });
	const s = queueSettings();
	const options = { batchSize: 1, includeMetadata: true as const, pollingIntervalSeconds: s.pollSeconds };
	await boss.work<CalibrateJobData>(QUEUE_CALIBRATE, options, async ([job]) => {
		try {
			await calibrateJob(db, job, log);
		} catch (err) {
			// a database error: pg-boss retries the job after retryDelay, up to its retry limit
			const final = job.retryCount >= job.retryLimit;
			await store.failed(db, job.data.calibrationJobId, `the worker could not save its work: ${(err as Error).message}`, final).catch(() => {});
			throw err;
		}
	});
	await boss.work<ParseJobData>(QUEUE_PARSE_UPLOAD, options, async ([job]) => {
		await parseUploadJob(db, job.data.uploadId, log);
	});
	// the heartbeat sweep: hand jobs of dead workers back to the queue
	const sweep = setInterval(async () => {
		try {
			const { retried, given } = await store.claimStale(db, s.staleSeconds, MAX_ATTEMPTS);
			for (const j of [...retried, ...given]) {
				// failing the active queue job makes pg-boss retry it (or give up after its retry limit)
				if (j.queueJobId) await boss.fail(QUEUE_CALIBRATE, j.queueJobId, { message: 'worker stopped answering' });
				log(`calibration ${j.id}: worker lost mid-run; ${j.status === 'queued' ? 'queued again' : 'failed'}`);
			}
		} catch (err) {
			log(`sweep: ${(err as Error).message}`);
		}
	}, s.maintenanceSeconds * 1000);
	return {
		stop: async () => {
			clearInterval(sweep);
			await boss.stop({ graceful: true, timeout: 5000, wait: true });
			await client.end({ timeout: 5 });
		}
	};
}
