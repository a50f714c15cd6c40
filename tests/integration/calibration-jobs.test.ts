/**
 * Calibration jobs end to end: the API queues, a worker process (started here) runs the engine
 * and writes progress and the record; reuse, cancel, retry and authorization; and the two
 * reliability cases: PostgreSQL restarted mid-job, and the worker killed mid-job.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inject } from 'vitest';
import { eq } from 'drizzle-orm';
import { client, latestMail, linkIn, signIn } from '../helpers/session.js';
import { addMember, closeDb, db, makeProject, makeTeam, makeUser } from '../helpers/factories.js';
import { jobRow, makePlan, smallPlan } from '../helpers/plans.js';
import { startWorker, type TestWorker } from '../helpers/worker.js';
import { calibrationJobs, calibrations, plans } from '../../src/lib/server/db/schema.js';
import { calibrationRecordSchema } from '../../src/lib/engine/calibrate/record.js';
import { startCluster, stopCluster } from '../../src/lib/server/db/cluster.js';
import * as store from '../../src/lib/server/jobs/store.js';

let editor: ReturnType<typeof client>;
let viewer: ReturnType<typeof client>;
let outsider: ReturnType<typeof client>;
let teamId: string;
let projectId: string;
let editorEmail: string;
const workers: TestWorker[] = [];

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

interface Job {
	id: string;
	status: string;
	phase: string;
	fraction: number;
	error: string | null;
	attempts: number;
	calibrationId: string | null;
	reused: boolean;
	calibration: { id: string; record?: unknown } | null;
}

async function getJob(id: string): Promise<Job> {
	const res = await editor(`/api/calibrations/${id}`);
	expect(res.status).toBe(200);
	return (await res.json()).job;
}

/** Poll the API until the job leaves queued/running; returns every fraction seen on the way. */
async function untilSettled(id: string, timeoutMs = 40_000) {
	const fractions: number[] = [];
	const until = Date.now() + timeoutMs;
	for (;;) {
		const job = await getJob(id).catch(() => null);
		if (job) {
			fractions.push(job.fraction);
			if (job.status !== 'queued' && job.status !== 'running') return { job, fractions };
		}
		if (Date.now() > until) throw new Error(`job ${id} still ${job?.status} after ${timeoutMs} ms`);
		await sleep(300);
	}
}

async function untilRunning(id: string) {
	for (let i = 0; i < 100; i++) {
		const j = await jobRow(id);
		if (j.status === 'running') return j;
		await sleep(100);
	}
	throw new Error(`job ${id} never started`);
}

beforeAll(async () => {
	const team = await makeTeam();
	teamId = team.id;
	projectId = (await makeProject(team.id)).id;
	const e = await makeUser('editor');
	const v = await makeUser('viewer');
	const o = await makeUser('outsider');
	await addMember(team.id, e.id, 'editor');
	await addMember(team.id, v.id, 'viewer');
	await addMember((await makeTeam()).id, o.id, 'owner');
	editorEmail = e.email!;
	editor = client(await signIn(e.email!));
	viewer = client(await signIn(v.email!));
	outsider = client(await signIn(o.email!));
});

afterAll(async () => {
	await Promise.all(workers.map((w) => w.stop()));
	await closeDb();
});

describe('calibration jobs', () => {
	it('queues, runs in a worker with moving progress, stores the record, then reuses it for a plan of the same shape', async () => {
		workers.push(await startWorker());
		const plan = await makePlan(teamId, projectId, smallPlan(0.5));
		const asked = Date.now();
		const res = await editor(`/api/plans/${plan.id}/calibrate`, { method: 'POST', json: {} });
		expect(res.status).toBe(202);
		const queued = (await res.json()).job as Job;
		expect(queued).toMatchObject({ status: 'queued', reused: false, planId: plan.id });

		const { job, fractions } = await untilSettled(queued.id);
		expect(job.status).toBe('done');
		expect(job.fraction).toBe(1);
		// the bar moved through intermediate values, not straight from 0 to 1
		expect(fractions.some((f) => f > 0 && f < 1)).toBe(true);
		const record = calibrationRecordSchema.parse(job.calibration!.record);
		expect(record.runs.length).toBeGreaterThan(0);
		expect(record.plan.training.C).toBe(0.5);
		// whoever started it hears that it finished, with a link to the plan
		const mail = await latestMail(editorEmail, asked);
		expect(mail.subject).toBe(`Calibration finished: ${plan.name}`);
		expect(linkIn(mail)).toBe(`${inject('baseUrl')}/teams/${teamId}/plans/${plan.id}`);

		// a second plan of the same shape (only rows differ) reuses the record and says so
		const twin = await makePlan(teamId, projectId, { ...smallPlan(0.5), dataset: { ...smallPlan(0.5).dataset, rows: 9000 } });
		const again = await editor(`/api/plans/${twin.id}/calibrate`, { method: 'POST', json: {} });
		expect(again.status).toBe(200);
		const reused = await again.json();
		expect(reused.reused).toBe(true);
		expect(reused.message).toMatch(/Reused a calibration of the same shape/);
		expect(reused.job).toMatchObject({ status: 'done', reused: true, calibrationId: job.calibrationId });

		// the plan's newest job is what a page picks up
		const latest = await (await viewer(`/api/plans/${twin.id}/calibrate`)).json();
		expect(latest.job.id).toBe(reused.job.id);
	});

	it('cancels a running calibration: the worker stops and stores nothing', async () => {
		const plan = await makePlan(teamId, projectId, smallPlan(0.25));
		const { job } = await (await editor(`/api/plans/${plan.id}/calibrate`, { method: 'POST', json: {} })).json();
		await untilRunning(job.id);
		expect((await viewer(`/api/calibrations/${job.id}/cancel`, { method: 'POST' })).status).toBe(403);
		const res = await editor(`/api/calibrations/${job.id}/cancel`, { method: 'POST' });
		expect(res.status).toBe(200);
		expect((await res.json()).job.status).toBe('cancelled');
		await workers[0].waitFor(new RegExp(`calibration ${job.id}: cancelled`), 15_000);
		const after = await getJob(job.id);
		expect(after.status).toBe('cancelled');
		expect(after.calibrationId).toBeNull();
		// cancelling twice is a conflict, not a silent success
		expect((await editor(`/api/calibrations/${job.id}/cancel`, { method: 'POST' })).status).toBe(409);
		// a run that ends just after the cancel stores nothing either: the record's insert is rolled back
		const before = await db().select({ id: calibrations.id }).from(calibrations).where(eq(calibrations.teamId, teamId));
		expect(await store.finish(db(), await jobRow(job.id), { late: true }, 'synthetic')).toBeNull();
		expect(await db().select({ id: calibrations.id }).from(calibrations).where(eq(calibrations.teamId, teamId))).toEqual(before);
	});

	it('shows why a job failed and can retry it', async () => {
		// a plan row whose saved input lost its dataset section: the worker must say so, not crash
		const [row] = await db()
			.insert(calibrationJobs)
			.values({ teamId, shapeKey: 'broken', input: { training: smallPlan(1).training }, status: 'failed', error: 'old failure' })
			.returning();
		expect((await viewer(`/api/calibrations/${row.id}/retry`, { method: 'POST' })).status).toBe(403);
		const res = await editor(`/api/calibrations/${row.id}/retry`, { method: 'POST' });
		expect(res.status).toBe(202);
		expect((await res.json()).job).toMatchObject({ status: 'queued', error: null });
		const { job } = await untilSettled(row.id);
		expect(job.status).toBe('failed');
		expect(job.error).toMatch(/the plan is invalid: dataset is required/);
		// retry on a job that is not failed or cancelled is refused
		const plan = await makePlan(teamId, projectId, smallPlan(0.5));
		const done = (await (await editor(`/api/plans/${plan.id}/calibrate`, { method: 'POST', json: {} })).json()).job;
		expect((await editor(`/api/calibrations/${done.id}/retry`, { method: 'POST' })).status).toBe(409);
	});

	it('names the bad field, hides other teams (404) and refuses viewers (403)', async () => {
		const plan = await makePlan(teamId, projectId, smallPlan(8));
		const bad = await editor(`/api/plans/${plan.id}/calibrate`, { method: 'POST', json: { force: 'yes' } });
		expect(bad.status).toBe(400);
		expect((await bad.json()).error.fields).toEqual({ force: 'force must be true or false' });
		const extra = await editor(`/api/plans/${plan.id}/calibrate`, { method: 'POST', json: { budget: 3 } });
		expect(extra.status).toBe(400);
		expect((await extra.json()).error.message).toMatch(/budget/);

		const broken = await makePlan(teamId, projectId, { ...smallPlan(8), dataset: { ...smallPlan(8).dataset, nnzPerRow: -1 } });
		const invalid = await editor(`/api/plans/${broken.id}/calibrate`, { method: 'POST', json: {} });
		expect(invalid.status).toBe(400);
		expect((await invalid.json()).error.fields).toMatchObject({ 'dataset.nnzPerRow': 'dataset.nnzPerRow must be greater than 0' });

		expect((await viewer(`/api/plans/${plan.id}/calibrate`, { method: 'POST', json: {} })).status).toBe(403);
		const hidden = await outsider(`/api/plans/${plan.id}/calibrate`, { method: 'POST', json: {} });
		expect(hidden.status).toBe(404);
		expect((await hidden.json()).error.code).toBe('not_found');
		expect((await editor(`/api/plans/not-a-plan/calibrate`, { method: 'POST', json: {} })).status).toBe(404);
		const [someJob] = await db().select({ id: calibrationJobs.id }).from(calibrationJobs).where(eq(calibrationJobs.teamId, teamId)).limit(1);
		expect((await outsider(`/api/calibrations/${someJob.id}`)).status).toBe(404);
		expect((await outsider(`/api/calibrations/${someJob.id}/cancel`, { method: 'POST' })).status).toBe(404);
		expect((await viewer(`/api/calibrations/${someJob.id}`)).status).toBe(200);
	});

	it('survives a PostgreSQL restart mid-job: the job completes and no plan is lost', async () => {
		const plan = await makePlan(teamId, projectId, smallPlan(2));
		const before = (await db().select({ id: plans.id }).from(plans).where(eq(plans.teamId, teamId))).map((p) => p.id).sort();
		const { job } = await (await editor(`/api/plans/${plan.id}/calibrate`, { method: 'POST', json: {} })).json();
		await untilRunning(job.id);
		const dataDir = inject('pgDataDir');
		const port = Number(new URL(inject('databaseUrl')).port);
		stopCluster(dataDir);
		await sleep(1500);
		startCluster(dataDir, port);
		const { job: after } = await untilSettled(job.id);
		expect(after.status).toBe('done');
		expect(after.calibration).not.toBeNull();
		const now = (await db().select({ id: plans.id }).from(plans).where(eq(plans.teamId, teamId))).map((p) => p.id).sort();
		expect(now).toEqual(before);
		const [p] = await db().select().from(plans).where(eq(plans.id, plan.id));
		expect(p.input).toEqual(smallPlan(2));
	});

	it('retries a job whose worker was killed mid-run', async () => {
		const doomed = workers.pop()!;
		const plan = await makePlan(teamId, projectId, smallPlan(4));
		const { job } = await (await editor(`/api/plans/${plan.id}/calibrate`, { method: 'POST', json: {} })).json();
		await untilRunning(job.id);
		// a tiny calibration still takes seconds, so the kill lands mid-run
		doomed.child.kill('SIGKILL');
		await new Promise((r) => doomed.child.once('exit', r));
		expect((await jobRow(job.id)).status).toBe('running');

		workers.push(await startWorker());
		// its heartbeat stopped; after LOADLINE_JOB_STALE_SECONDS (6 in tests) the new worker's sweep hands the job on
		const { job: after } = await untilSettled(job.id, 50_000);
		expect(after.status).toBe('done');
		expect(after.attempts).toBe(2);
		expect(workers[0].output()).toMatch(new RegExp(`calibration ${job.id}: worker lost mid-run; queued again`));
		const [cal] = await db().select().from(calibrations).where(eq(calibrations.id, after.calibrationId!));
		expect(cal.teamId).toBe(teamId);
	}, 90_000);
});
