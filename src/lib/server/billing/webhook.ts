/**
 * Stripe webhooks: verify the signature on the raw body, then apply each event id once.
 * The event row and its effect commit in one transaction, so a repeat (even a concurrent one) does nothing,
 * and an event older than the state already applied for its subscription is recorded as stale, not applied.
 */
import { eq } from 'drizzle-orm';
import type Stripe from 'stripe';
import { db } from '../db/index.js';
import { stripeEvents, teamBilling, teams } from '../db/schema.js';
import { ApiError } from '../http.js';
import { stripe, webhookSecret } from './stripe.js';
import { fromSubscription } from './subscription.js';

/** Seconds a signed event stays acceptable (Stripe's own default), so a replayed old delivery is refused. */
export const TOLERANCE_SECONDS = 300;

export type Outcome = 'applied' | 'stale' | 'ignored' | 'no_team' | 'duplicate';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** Verify and parse; a bad, missing, stale or tampered signature is a 400 and nothing is written. */
export function verify(rawBody: string, signature: string | null): Stripe.Event {
	if (!signature) throw new ApiError(400, 'missing_signature', 'The Stripe-Signature header is missing.');
	try {
		return stripe().webhooks.constructEvent(rawBody, signature, webhookSecret(), TOLERANCE_SECONDS);
	} catch (e) {
		throw new ApiError(400, 'bad_signature', `The webhook signature does not verify: ${(e as Error).message}`);
	}
}

type Tx = Parameters<Parameters<typeof db.transaction>[0]>[0];

async function teamForSubscription(tx: Tx, sub: Stripe.Subscription): Promise<string | null> {
	const [known] = await tx.select({ teamId: teamBilling.teamId }).from(teamBilling).where(eq(teamBilling.stripeSubscriptionId, sub.id)).for('update');
	if (known) return known.teamId;
	// a subscription made outside the app (e.g. in Stripe's dashboard) for a customer we know
	const customer = typeof sub.customer === 'string' ? sub.customer : sub.customer?.id;
	if (customer) {
		const [byCustomer] = await tx.select({ teamId: teamBilling.teamId }).from(teamBilling).where(eq(teamBilling.stripeCustomerId, customer)).for('update');
		if (byCustomer) return byCustomer.teamId;
	}
	const claimed = sub.metadata?.teamId;
	if (!claimed || !UUID.test(claimed)) return null;
	const [team] = await tx.select({ id: teams.id }).from(teams).where(eq(teams.id, claimed));
	if (!team) return null;
	await tx.insert(teamBilling).values({ teamId: team.id }).onConflictDoNothing();
	await tx.select({ teamId: teamBilling.teamId }).from(teamBilling).where(eq(teamBilling.teamId, team.id)).for('update');
	return team.id;
}

async function applySubscription(tx: Tx, event: Stripe.Event, at: Date): Promise<Outcome> {
	const sub = event.data.object as Stripe.Subscription;
	const teamId = await teamForSubscription(tx, sub);
	if (!teamId) return 'no_team';
	const [current] = await tx.select().from(teamBilling).where(eq(teamBilling.teamId, teamId));
	if (current.lastEventAt && at < current.lastEventAt) return 'stale';
	// A subscription that ended never comes back in Stripe, so a late 'updated' cannot revive it.
	if (current.stripeSubscriptionId === sub.id && current.status === 'canceled' && sub.status !== 'canceled') return 'stale';
	// An event about an older subscription of the team must not overwrite a newer one.
	if (current.stripeSubscriptionId && current.stripeSubscriptionId !== sub.id && current.status !== 'canceled' && current.status !== 'none') return 'stale';
	await tx
		.update(teamBilling)
		.set({ ...fromSubscription(sub), lastEventAt: at })
		.where(eq(teamBilling.teamId, teamId));
	return 'applied';
}

/** Apply a verified event once. */
export async function apply(event: Stripe.Event): Promise<Outcome> {
	const at = new Date(event.created * 1000);
	return db.transaction(async (tx) => {
		const inserted = await tx
			.insert(stripeEvents)
			.values({ id: event.id, type: event.type, eventCreatedAt: at, outcome: 'pending' })
			.onConflictDoNothing()
			.returning({ id: stripeEvents.id });
		if (inserted.length === 0) return 'duplicate';
		const outcome: Outcome = event.type.startsWith('customer.subscription.') ? await applySubscription(tx, event, at) : 'ignored';
		await tx.update(stripeEvents).set({ outcome }).where(eq(stripeEvents.id, event.id));
		return outcome;
	});
}

