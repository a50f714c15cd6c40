/** Invented demo data for `npm start`: one team, one user, two projects. Idempotent. */
import { and, eq } from 'drizzle-orm';
import type { Db } from './db/client.js';
import { memberships, projects, teams, users } from './db/schema.js';

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
