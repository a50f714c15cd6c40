/** Plans straight into the throwaway database (the plan schema's JSON as input), for tests of calibrations. */
import { eq } from 'drizzle-orm';
import { calibrationJobs, plans } from '../../src/lib/server/db/schema.js';
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
