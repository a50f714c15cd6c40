/**
 * Result e-mails without SvelteKit: the queue worker (plain Node) and the app both build one
 * with their own database handle. Each call says whether a mail went out and, if not, why.
 */
import { eq } from 'drizzle-orm';
import { createTransport, type Transporter } from 'nodemailer';
import type { Db } from './db/client.js';
import { userPreferences, users } from './db/schema.js';
import * as letters from './letters.js';

export type Sent = { sent: true } | { sent: false; reason: 'opted_out' | 'no_address' };

export interface NotifierOptions {
	/** default SMTP_URL, else the local fake inbox */
	smtpUrl?: string;
	/** default MAIL_FROM */
	from?: string;
	/** public origin for links in mails; default ORIGIN */
	origin?: string;
}

export function createNotifier(db: Db, opts: NotifierOptions = {}) {
	const smtpUrl = opts.smtpUrl ?? process.env.SMTP_URL ?? 'smtp://127.0.0.1:1025';
	const from = opts.from ?? process.env.MAIL_FROM ?? 'Loadline <no-reply@loadline.test>';
	const origin = opts.origin ?? process.env.ORIGIN ?? 'http://127.0.0.1:5173';
	let transport: Transporter | null = null;
	const absolute = (pathOrUrl: string) => new URL(pathOrUrl, origin).toString();

	async function send(to: string, letter: { subject: string; text: string; html: string }) {
		transport ??= createTransport(smtpUrl);
		const result = await transport.sendMail({ from, to, ...letter });
		if ([...(result.rejected ?? []), ...(result.pending ?? [])].length) throw new Error(`mail to ${to} could not be sent`);
	}

	async function addressOf(userId: string): Promise<string | null> {
		const [u] = await db.select({ email: users.email }).from(users).where(eq(users.id, userId));
		return u?.email ?? null;
	}

	return {
		/** "Your calibration finished", unless the user turned it off in /settings. */
		async notifyCalibrationFinished(userId: string, planName: string, url: string): Promise<Sent> {
			const [pref] = await db.select({ on: userPreferences.calibrationMail }).from(userPreferences).where(eq(userPreferences.userId, userId));
			if (pref && !pref.on) return { sent: false, reason: 'opted_out' };
			const to = await addressOf(userId);
			if (!to) return { sent: false, reason: 'no_address' };
			await send(to, letters.calibrationFinished({ planName, url: absolute(url), settingsUrl: absolute('/settings') }));
			return { sent: true };
		},
		/** "A comparison was shared with you", to one member; `sharedBy` is the sharer's name or address. */
		async notifyComparisonShared(recipientUserId: string, sharedBy: string, comparisonName: string, url: string): Promise<Sent> {
			const to = await addressOf(recipientUserId);
			if (!to) return { sent: false, reason: 'no_address' };
			await send(to, letters.comparisonShared({ sharedBy, name: comparisonName, url: absolute(url) }));
			return { sent: true };
		}
	};
}
