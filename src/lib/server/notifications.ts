/** E-mails about results, for the planning side to call. Each returns whether a mail went out and why not. */
import { env } from '$env/dynamic/private';
import { eq } from 'drizzle-orm';
import { db } from './db/index.js';
import { users } from './db/schema.js';
import * as mail from './mail.js';
import * as letters from './letters.js';
import * as preferences from './preferences.js';

export type Sent = { sent: true } | { sent: false; reason: 'opted_out' | 'no_address' };

async function addressOf(userId: string): Promise<string | null> {
	const [u] = await db.select({ email: users.email }).from(users).where(eq(users.id, userId));
	return u?.email ?? null;
}

/** Absolute link for a path or URL: mails need the public origin (ORIGIN), not a relative path. */
function absolute(pathOrUrl: string): string {
	return new URL(pathOrUrl, env.ORIGIN ?? 'http://127.0.0.1:5173').toString();
}

/** "Your calibration finished", unless the user turned it off in /settings. */
export async function notifyCalibrationFinished(userId: string, planName: string, url: string): Promise<Sent> {
	if (!(await preferences.get(userId)).calibrationMail) return { sent: false, reason: 'opted_out' };
	const to = await addressOf(userId);
	if (!to) return { sent: false, reason: 'no_address' };
	await mail.send({ to, ...letters.calibrationFinished({ planName, url: absolute(url), settingsUrl: absolute('/settings') }) });
	return { sent: true };
}

/** "A comparison was shared with you", to one team member; `sharedBy` is the sharer's name or address. */
export async function notifyComparisonShared(recipientUserId: string, sharedBy: string, comparisonName: string, url: string): Promise<Sent> {
	const to = await addressOf(recipientUserId);
	if (!to) return { sent: false, reason: 'no_address' };
	await mail.send({ to, ...letters.comparisonShared({ sharedBy, name: comparisonName, url: absolute(url) }) });
	return { sent: true };
}
