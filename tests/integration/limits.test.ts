/** limits.check, the entry the calibration side calls: Free and Team calibration allowances per calendar month. */
import { afterAll, beforeAll, describe, expect, it, inject, vi } from 'vitest';
import { eq } from 'drizzle-orm';
import { calibrationJobs, calibrations, teamBilling } from '../../src/lib/server/db/schema.js';
import { closeDb, db, makeTeam, unique } from '../helpers/factories.js';

// server modules read SvelteKit's private env; here it is this process's environment, set below
vi.mock('$env/dynamic/private', () => ({ env: process.env }));

let limits: typeof import('../../src/lib/server/billing/limits.js');
beforeAll(async () => {
	process.env.DATABASE_URL = inject('databaseUrl');
	limits = await import('../../src/lib/server/billing/limits.js');
});
afterAll(closeDb);

const jobs = (teamId: string, n: number, createdAt = new Date()) =>
	db().insert(calibrationJobs).values(Array.from({ length: n }, () => ({ teamId, shapeKey: 'k', input: {}, createdAt })));

describe('limits.check', () => {
	it('allows 50 calibration runs a month on Free, counting only this month, then says what Team unlocks', async () => {
		const team = await makeTeam(unique('Calibrating'));
		await jobs(team.id, 49);
		await jobs(team.id, 30, new Date(Date.UTC(2020, 0, 15))); // an old month does not count
		expect(await limits.check(team.id, 'calibrations')).toMatchObject({ allowed: true, used: 49, limit: 50, tier: 'free', message: '' });
		await jobs(team.id, 1);
		const full = await limits.check(team.id, 'calibrations');
		expect(full).toMatchObject({ allowed: false, used: 50, limit: 50, tier: 'free' });
		expect(full.message).toContain('The Team tier ($15.00 per seat per month) allows 2000 calibration runs per calendar month (UTC)');
		await expect(limits.assert(team.id, 'calibrations')).rejects.toMatchObject({ status: 402, code: 'limit_reached' });

		await db().insert(teamBilling).values({ teamId: team.id, status: 'active' });
		expect(await limits.check(team.id, 'calibrations')).toMatchObject({ allowed: true, limit: 2000, tier: 'team' });
		expect(await limits.check(team.id, 'projects')).toMatchObject({ allowed: true, limit: null });
	});

	it('does not count a job that reused an older calibration, and counts one that made its own', async () => {
		const team = await makeTeam(unique('Reusing'));
		const [older] = await db().insert(calibrations).values({ teamId: team.id, shapeKey: 'k', record: {}, createdAt: new Date(Date.now() - 3600_000) }).returning();
		await db().insert(calibrationJobs).values({ teamId: team.id, shapeKey: 'k', input: {}, status: 'done', calibrationId: older.id });
		expect(await limits.check(team.id, 'calibrations')).toMatchObject({ used: 0 });
		const ran = new Date(Date.now() - 60_000);
		const [job] = await db().insert(calibrationJobs).values({ teamId: team.id, shapeKey: 'k', input: {}, status: 'done', createdAt: ran }).returning();
		const [own] = await db().insert(calibrations).values({ teamId: team.id, shapeKey: 'k', record: {} }).returning();
		await db().update(calibrationJobs).set({ calibrationId: own.id }).where(eq(calibrationJobs.id, job.id));
		expect(await limits.check(team.id, 'calibrations')).toMatchObject({ used: 1 });
	});
});
