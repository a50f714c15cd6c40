/**
 * "Your calibration finished", sent by the worker (which runs outside SvelteKit, so it reads
 * SMTP_URL, MAIL_FROM and ORIGIN itself) to whoever started the job, unless they opted out.
 * Same rule and words as notifications.notifyCalibrationFinished.
 */
import { eq } from 'drizzle-orm';
import { createTransport, type Transporter } from 'nodemailer';
import type { Db } from '../db/client.js';
import { plans, userPreferences, users, type CalibrationJob } from '../db/schema.js';
import { calibrationFinished } from '../letters.js';

let transport: Transporter | null = null;

export async function calibrationDone(db: Db, job: CalibrationJob): Promise<'sent' | 'opted_out' | 'no_address'> {
	if (!job.createdBy) return 'no_address';
	const [pref] = await db.select({ on: userPreferences.calibrationMail }).from(userPreferences).where(eq(userPreferences.userId, job.createdBy));
	if (pref && !pref.on) return 'opted_out';
	const [user] = await db.select({ email: users.email }).from(users).where(eq(users.id, job.createdBy));
	if (!user?.email) return 'no_address';
	const [plan] = job.planId ? await db.select({ name: plans.name }).from(plans).where(eq(plans.id, job.planId)) : [];
	const origin = process.env.ORIGIN ?? 'http://127.0.0.1:5173';
	const url = new URL(job.planId ? `/teams/${job.teamId}/plans/${job.planId}` : `/teams/${job.teamId}/projects`, origin).toString();
	transport ??= createTransport(process.env.SMTP_URL ?? 'smtp://127.0.0.1:1025');
	await transport.sendMail({
		from: process.env.MAIL_FROM ?? 'Loadline <no-reply@loadline.test>',
		to: user.email,
		...calibrationFinished({ planName: plan?.name ?? 'a deleted plan', url, settingsUrl: new URL('/settings', origin).toString() })
	});
	return 'sent';
}
