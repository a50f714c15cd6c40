/** Invented demo data for `npm start`: one team, one user, two projects and three plans. Idempotent. */
import { and, eq } from 'drizzle-orm';
import type { Db } from './db/client.js';
import { randomBytes } from 'node:crypto';
import { findPreset } from '../engine/model/presets.js';
import { memberships, plans, projects, sessions, teams, users } from './db/schema.js';

export const DEMO_EMAIL = 'demo@loadline.test';
const DEMO_TEAM = 'Kestrel Freight — data science';
const DEMO_PROJECTS = [
	{ name: 'Parcel delay classifier', description: 'Will a parcel miss its promised day? Nightly retrain on scan events.' },
	{ name: 'Invoice anomaly screening', description: 'Flag suspicious carrier invoices; a weekly sweep over C values.' }
];

export async function seedDemo(db: Db): Promise<{ created: boolean }> {
	return db.transaction(async (tx) => {
		let created = false;
		let [user] = await tx.select().from(users).where(eq(users.email, DEMO_EMAIL));
		if (!user) {
			[user] = await tx.insert(users).values({ email: DEMO_EMAIL, name: 'Dana Demo', emailVerified: new Date() }).returning();
			created = true;
		}
		let [team] = await tx.select().from(teams).where(and(eq(teams.name, DEMO_TEAM), eq(teams.personal, false)));
		if (!team) {
			[team] = await tx.insert(teams).values({ name: DEMO_TEAM }).returning();
			created = true;
		}
		await tx.insert(memberships).values({ teamId: team.id, userId: user.id, role: 'owner' }).onConflictDoNothing();
		for (const p of DEMO_PROJECTS) {
			const r = await tx.insert(projects).values({ teamId: team.id, createdBy: user.id, ...p }).onConflictDoNothing().returning({ id: projects.id });
			if (r.length) created = true;
		}
		return { created };
	});
}

/** A preset as a plan's machine section; the demo plans use the generic presets, not numbers of their own. */
function presetMachine(id: string) {
	const { id: _id, ...machine } = findPreset(id)!;
	return machine;
}

// One nightly job on two candidate machines: the comparison a platform engineer makes.
const NIGHTLY_PARCEL_JOB = {
	dataset: { rows: 40_000_000, features: 2_000_000, nnzPerRow: 60, positiveFraction: 0.22, valueKind: 'real', format: 'binary', compressed: false },
	training: { loss: 'hinge', C: 1, tol: 0.01, cValues: 1, folds: 1 },
	deadlineHours: 8
};

const DEMO_PLANS: { project: string; name: string; plan: Record<string, unknown> }[] = [
	{ project: 'Parcel delay classifier', name: 'Nightly retrain on a desktop', plan: { ...NIGHTLY_PARCEL_JOB, machine: presetMachine('desktop-pcie3') } },
	{ project: 'Parcel delay classifier', name: 'Nightly retrain on the 10GbE server', plan: { ...NIGHTLY_PARCEL_JOB, machine: presetMachine('server-10gbe') } },
	{
		project: 'Invoice anomaly screening',
		name: 'Weekly C sweep on the archive box',
		plan: {
			dataset: { rows: 5_000_000, features: 500_000, nnzPerRow: 30, positiveFraction: 0.05, valueKind: 'binary', format: 'text', compressed: true },
			machine: presetMachine('archive-hdd'),
			training: { loss: 'logistic', C: 0.5, tol: 0.01, cValues: 6, folds: 3 },
			deadlineHours: 48
		}
	}
];

/**
 * Demo plans go in through the running app's own API, so their estimate snapshots are made exactly as a
 * user's would be; a short-lived session row stands in for the demo user's sign-in. Projects that already
 * hold plans are left alone.
 */
export async function seedDemoPlans(db: Db, baseUrl: string): Promise<number> {
	const [user] = await db.select().from(users).where(eq(users.email, DEMO_EMAIL));
	if (!user) return 0;
	const [team] = await db.select().from(teams).where(and(eq(teams.name, DEMO_TEAM), eq(teams.personal, false)));
	if (!team) return 0;
	const mine = await db.select({ id: projects.id, name: projects.name }).from(projects).where(eq(projects.teamId, team.id));
	const todo = DEMO_PLANS.map((p) => ({ ...p, projectId: mine.find((m) => m.name === p.project)?.id })).filter((p) => p.projectId);
	const withPlans = new Set((await db.select({ projectId: plans.projectId }).from(plans).where(eq(plans.teamId, team.id))).map((r) => r.projectId));
	const missing = todo.filter((p) => !withPlans.has(p.projectId!));
	if (missing.length === 0) return 0;
	const token = randomBytes(24).toString('hex');
	await db.insert(sessions).values({ sessionToken: token, userId: user.id, expires: new Date(Date.now() + 600_000) });
	let made = 0;
	try {
		for (const p of missing) {
			const res = await fetch(`${baseUrl}/api/plans`, {
				method: 'POST',
				headers: { cookie: `authjs.session-token=${token}`, origin: baseUrl, 'content-type': 'application/json' },
				body: JSON.stringify({ projectId: p.projectId, name: p.name, plan: p.plan })
			});
			if (res.ok) made++;
			else console.error(`demo plan "${p.name}" not created: ${res.status} ${await res.text()}`);
		}
	} finally {
		await db.delete(sessions).where(eq(sessions.sessionToken, token));
	}
	return made;
}
