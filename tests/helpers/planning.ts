/** Plans, catalog machines and comparisons straight into the throwaway database, for tests of the planning pages. */
import { readFileSync } from 'node:fs';
import { comparisons, machines, plans } from '../../src/lib/server/db/schema.js';
import { db, unique } from './factories.js';

/** The example plan shipped with the project (an invented scenario), as PLAN.json. */
export const examplePlan = () => JSON.parse(readFileSync(new URL('../fixtures/plan-example.json', import.meta.url), 'utf8'));

export async function makeSavedPlan(teamId: string, projectId: string, input: Record<string, unknown> = examplePlan()) {
	const name = unique('plan');
	const [p] = await db().insert(plans).values({ teamId, projectId, name, input: { ...input, name } }).returning();
	return p;
}

export async function makeMachine(teamId: string) {
	const [m] = await db()
		.insert(machines)
		.values({ teamId, name: unique('box'), profile: { ramGiB: 64, diskMBps: 500, diskInterface: 'sata3', cores: 8, coreSpeed: 1 } })
		.returning();
	return m;
}

export async function makeComparison(teamId: string, planIds: string[], createdBy?: string) {
	const [c] = await db().insert(comparisons).values({ teamId, name: unique('comparison'), planIds, createdBy }).returning();
	return c;
}

/** Rows the authorization table needs in its team, made once per team on first use. */
export function planningFixtures() {
	const made = new Map<string, Promise<{ planIds: string[]; machineId: string; comparisonId: string }>>();
	return {
		get(teamId: string, projectId: string) {
			if (!made.has(teamId))
				made.set(
					teamId,
					(async () => {
						const a = await makeSavedPlan(teamId, projectId);
						const b = await makeSavedPlan(teamId, projectId);
						return { planIds: [a.id, b.id], machineId: (await makeMachine(teamId)).id, comparisonId: (await makeComparison(teamId, [a.id, b.id])).id };
					})()
				);
			return made.get(teamId)!;
		},
		freshPlan: async (teamId: string, projectId: string) => (await makeSavedPlan(teamId, projectId)).id,
		freshComparison: async (teamId: string, planIds: string[]) => (await makeComparison(teamId, planIds)).id
	};
}
