/** Plans straight into the throwaway database (the plan schema's JSON as input), for tests of calibrations. */
import { eq } from 'drizzle-orm';
import { calibrationJobs, plans, uploads } from '../../src/lib/server/db/schema.js';
import { db, unique } from './factories.js';

/** A small plan that calibrates in seconds; `C` sets its shape apart from other tests' plans. */
export function smallPlan(C: number) {
	return {
		dataset: { rows: 3000, features: 2000, nnzPerRow: 8, positiveFraction: 0.4, valueKind: 'binary', format: 'binary', compressed: false },
		machine: { name: 'test box', ramGiB: 16, diskMBps: 520, diskInterface: 'sata3', cores: 4, coreSpeed: 1, pricePerHour: 0.05 },
		training: { loss: 'hinge', C, tol: 0.01, cValues: 1, folds: 1 }
	};
}

export async function makePlan(teamId: string, projectId: string, input: unknown) {
	const [p] = await db().insert(plans).values({ teamId, projectId, name: unique('plan'), input }).returning();
	return p;
}

export async function jobRow(id: string) {
	const [j] = await db().select().from(calibrationJobs).where(eq(calibrationJobs.id, id));
	return j;
}

const sampleProfile = { format: 'svmlight', rows: 1, maxFeature: 3, nnzMean: 1, nnzStd: 0, positiveFraction: 1, valueKind: 'binary', bytesPerRow: 6, bytes: 6, nnz: 1, lines: 1, badLineCount: 0 };

/** Rows the authorization table needs in its team, made once per team on first use. */
export function calibrationFixtures() {
	const made = new Map<string, Promise<{ brokenPlanId: string; planId: string; doneJobId: string; uploadId: string }>>();
	const once = (teamId: string, projectId: string) => {
		if (!made.has(teamId))
			made.set(
				teamId,
				(async () => {
					// a saved plan that fails validation: members get past the guard to a 400, nobody queues work
					const broken = await makePlan(teamId, projectId, { ...smallPlan(1), dataset: { ...smallPlan(1).dataset, nnzPerRow: -1 } });
					const plan = await makePlan(teamId, projectId, smallPlan(1));
					const [done] = await db().insert(calibrationJobs).values({ teamId, planId: plan.id, shapeKey: 'fixture', input: smallPlan(1), status: 'done', fraction: 1 }).returning();
					const [up] = await db()
						.insert(uploads)
						.values({ teamId, fileName: 'sample.svm', kind: 'svmlight', bytes: 6, storedPath: `${teamId}/fixture`, status: 'ready', profile: sampleProfile })
						.returning();
					return { brokenPlanId: broken.id, planId: plan.id, doneJobId: done.id, uploadId: up.id };
				})()
			);
		return made.get(teamId)!;
	};
	return {
		get: once,
		/** a queued job with no queue entry: cancelling it touches nothing else */
		queuedJob: async (teamId: string) => (await db().insert(calibrationJobs).values({ teamId, shapeKey: 'fixture', input: {} }).returning())[0].id,
		/** a failed job whose input a worker rejects at once when it is retried */
		failedJob: async (teamId: string) => (await db().insert(calibrationJobs).values({ teamId, shapeKey: 'fixture', input: {}, status: 'failed', error: 'fixture' }).returning())[0].id
	};
}
