/** Per-user mail choices; a user without a row gets the defaults. */
import { eq } from 'drizzle-orm';
import { db } from './db/index.js';
import { userPreferences } from './db/schema.js';

export interface Preferences {
	/** e-mail when a calibration the user started finishes (default on) */
	calibrationMail: boolean;
}

const defaults: Preferences = { calibrationMail: true };

export async function get(userId: string): Promise<Preferences> {
	const [row] = await db.select({ calibrationMail: userPreferences.calibrationMail }).from(userPreferences).where(eq(userPreferences.userId, userId));
	return row ?? defaults;
}

export async function set(userId: string, prefs: Preferences): Promise<Preferences> {
	await db
		.insert(userPreferences)
		.values({ userId, ...prefs })
		.onConflictDoUpdate({ target: userPreferences.userId, set: { ...prefs, updatedAt: new Date() } });
	return get(userId);
}
