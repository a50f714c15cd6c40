/**
 * Fixed-window counters in PostgreSQL, so every stateless web server shares them.
 * Used for sign-in e-mails: per address (stops mail-bombing one inbox) and per client address.
 */
import { env } from '$env/dynamic/private';
import type { RequestEvent } from '@sveltejs/kit';
import { lt, sql } from 'drizzle-orm';
import { db } from './db/index.js';
import { rateLimits } from './db/schema.js';

export interface Rule {
	limit: number;
	windowSeconds: number;
}

/** Sign-in links: 5 per address and 30 per client address in 15 minutes. */
export const SIGNIN_PER_ADDRESS: Rule = { limit: 5, windowSeconds: 15 * 60 };
export const SIGNIN_PER_CLIENT: Rule = { limit: 30, windowSeconds: 15 * 60 };
/** Invitation e-mails (sent and re-sent): 30 per team an hour, so a team cannot be used to flood inboxes. */
export const INVITES_PER_TEAM: Rule = { limit: 30, windowSeconds: 60 * 60 };

/** Count one hit; true while the key stays within its rule. */
export async function hit(key: string, rule: Rule): Promise<boolean> {
	const windowMs = rule.windowSeconds * 1000;
	const start = new Date(Math.floor(Date.now() / windowMs) * windowMs);
	const [row] = await db
		.insert(rateLimits)
		.values({ key, windowStart: start, hits: 1 })
		.onConflictDoUpdate({ target: [rateLimits.key, rateLimits.windowStart], set: { hits: sql`${rateLimits.hits} + 1` } })
		.returning({ hits: rateLimits.hits });
	// Old windows are useless; a few deletes now and then keep the table small.
	if (Math.random() < 0.02) await db.delete(rateLimits).where(lt(rateLimits.windowStart, new Date(Date.now() - 86_400_000)));
	return row.hits <= rule.limit;
}

/**
 * The client's address: the right-most entry of CLIENT_IP_HEADER when the app runs behind a proxy
 * that sets it (e.g. x-forwarded-for), else the socket's peer address.
 */
export function clientAddress(event: RequestEvent): string {
	const header = env.CLIENT_IP_HEADER;
	const forwarded = header ? event.request.headers.get(header) : null;
	if (forwarded) {
		const parts = forwarded.split(',').map((s) => s.trim()).filter(Boolean);
		if (parts.length) return parts[parts.length - 1];
	}
	try {
		return event.getClientAddress();
	} catch {
		return 'unknown';
	}
}

/** Null when a sign-in e-mail may go out; otherwise the message to show. Both counters advance. */
export async function signInRefusal(email: string, event: RequestEvent): Promise<string | null> {
	const address = email.trim().toLowerCase();
	const [byAddress, byClient] = await Promise.all([hit(`signin:address:${address}`, SIGNIN_PER_ADDRESS), hit(`signin:client:${clientAddress(event)}`, SIGNIN_PER_CLIENT)]);
	const minutes = SIGNIN_PER_ADDRESS.windowSeconds / 60;
	if (!byAddress) return `Too many sign-in links were asked for ${address} (at most ${SIGNIN_PER_ADDRESS.limit} in ${minutes} minutes). Wait a few minutes, then ask again; links already sent still work until they expire.`;
	if (!byClient) return `Too many sign-in links were asked from your network (at most ${SIGNIN_PER_CLIENT.limit} in ${minutes} minutes). Wait a few minutes, then try again.`;
	return null;
}
