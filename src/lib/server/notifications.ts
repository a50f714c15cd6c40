/** The app's result e-mails (the worker builds its own with createNotifier from notify.ts). */
import { env } from '$env/dynamic/private';
import { db } from './db/index.js';
import * as mail from './mail.js';
import { createNotifier, type Sent } from './notify.js';

export type { Sent };

let notifier: ReturnType<typeof createNotifier> | null = null;
const app = () => (notifier ??= createNotifier(db, { smtpUrl: mail.smtpUrl(), from: mail.mailFrom(), origin: env.ORIGIN }));

/** "Your calibration finished", unless the user turned it off in /settings. */
export const notifyCalibrationFinished = (userId: string, planName: string, url: string): Promise<Sent> => app().notifyCalibrationFinished(userId, planName, url);

/** "A comparison was shared with you"; `sharedBy` is the sharer's name or address. */
export const notifyComparisonShared = (recipientUserId: string, sharedBy: string, comparisonName: string, url: string): Promise<Sent> =>
	app().notifyComparisonShared(recipientUserId, sharedBy, comparisonName, url);
