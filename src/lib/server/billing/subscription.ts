/**
 * A team's subscription: the owner subscribes with a card token, seats follow the member count,
 * the owner cancels (at the end of the paid period). Local state mirrors what Stripe answered.
 */
import { count, eq, sql } from 'drizzle-orm';
import type Stripe from 'stripe';
import { db } from '../db/index.js';
import { memberships, teamBilling, type TeamBilling } from '../db/schema.js';
import { ApiError } from '../http.js';
import { seatPriceId, stripe, usingFake } from './stripe.js';
import { TEAM, tierFor, type Tier } from './tiers.js';

type Tx = Parameters<Parameters<typeof db.transaction>[0]>[0];

export interface BillingState {
	tier: Tier;
	status: string;
	seats: number;
	seatCents: number;
	currency: string;
	currentPeriodEnd: Date | null;
	cancelAtPeriodEnd: boolean;
	/** seats × seat price on the next period start; null when nothing will be charged */
	nextCharge: { cents: number; on: Date } | null;
	hasCustomer: boolean;
}

export async function row(teamId: string, tx: Tx | typeof db = db): Promise<TeamBilling | null> {
	const [r] = await tx.select().from(teamBilling).where(eq(teamBilling.teamId, teamId));
	return r ?? null;
}

export async function state(teamId: string): Promise<BillingState> {
	const r = await row(teamId);
	const tier = tierFor(r?.status);
	const seatCents = r?.seatPriceCents ?? TEAM.seatCents;
	const charging = tier.name === 'team' && !r?.cancelAtPeriodEnd && r?.currentPeriodEnd;
	return {
		tier,
		status: r?.status ?? 'none',
		seats: r?.seats ?? 0,
		seatCents,
		currency: r?.currency ?? TEAM.currency,
		currentPeriodEnd: r?.currentPeriodEnd ?? null,
		cancelAtPeriodEnd: r?.cancelAtPeriodEnd ?? false,
		nextCharge: charging ? { cents: seatCents * (r?.seats ?? 0), on: r!.currentPeriodEnd! } : null,
		hasCustomer: Boolean(r?.stripeCustomerId)
	};
}

async function memberCount(teamId: string, tx: Tx | typeof db = db): Promise<number> {
	const [r] = await tx.select({ n: count() }).from(memberships).where(eq(memberships.teamId, teamId));
	return r.n;
}

/** One billing change per team at a time, across every web server. */
async function lock(tx: Tx, teamId: string) {
	await tx.execute(sql`select pg_advisory_xact_lock(hashtext(${'billing:' + teamId}))`);
}

/** The fields of a Stripe subscription Loadline keeps. The fake puts the period end on the subscription, newer API versions on the item. */
export function fromSubscription(sub: Stripe.Subscription) {
	const item = sub.items?.data?.[0];
	const periodEnd = (sub as unknown as { current_period_end?: number }).current_period_end ?? item?.current_period_end;
	const plan = item as unknown as { plan?: { amount?: number | null; currency?: string }; price?: { unit_amount?: number | null; currency?: string } } | undefined;
	const fromItem = item
		? {
				subscriptionItemId: item.id,
				seats: item.quantity ?? 0,
				seatPriceCents: plan?.price?.unit_amount ?? plan?.plan?.amount ?? null,
				currency: plan?.price?.currency ?? plan?.plan?.currency ?? null
			}
		: {};
	return {
		stripeSubscriptionId: sub.id,
		status: sub.status,
		...fromItem,
		...(periodEnd && { currentPeriodEnd: new Date(periodEnd * 1000) }),
		cancelAtPeriodEnd: Boolean(sub.cancel_at_period_end),
		updatedAt: new Date()
	};
}

/** Stripe's message for a declined or invalid card, as a clear 402. */
function cardError(e: unknown): never {
	const err = e as { type?: string; message?: string };
	if (err?.type === 'StripeCardError' || err?.type === 'StripeInvalidRequestError') {
		throw new ApiError(402, 'card_declined', `The card was not accepted: ${err.message ?? 'declined'} Nothing was charged; try another card.`, { cardToken: err.message ?? 'declined' });
	}
	throw e;
}

let seatPlanReady: Promise<void> | null = null;

/** In the fake, make the per-seat plan on first use; in production STRIPE_SEAT_PRICE must exist already. */
function ensureSeatPlan(): Promise<void> {
	if (!usingFake()) return Promise.resolve();
	seatPlanReady ??= (async () => {
		const s = stripe();
		try {
			await s.plans.retrieve(seatPriceId());
		} catch {
			await s.plans.create({ id: seatPriceId(), amount: TEAM.seatCents, currency: TEAM.currency, interval: 'month', product: { name: 'Loadline Team seat' } });
		}
	})().catch((e) => {
		seatPlanReady = null;
		throw e;
	});
	return seatPlanReady;
}

/** The owner subscribes the team to the Team tier, paying for one seat per member. */
export async function subscribe(teamId: string, owner: { email: string }, cardToken: string): Promise<BillingState> {
	await db.transaction(async (tx) => {
		await lock(tx, teamId);
		const current = await row(teamId, tx);
		if (tierFor(current?.status).name === 'team') throw new ApiError(409, 'already_subscribed', 'This team is already on the Team tier.');
		const s = stripe();
		await ensureSeatPlan();
		let customerId = current?.stripeCustomerId ?? null;
		try {
			if (customerId) await s.customers.update(customerId, { source: cardToken });
			else customerId = (await s.customers.create({ email: owner.email, source: cardToken, metadata: { teamId } })).id;
		} catch (e) {
			cardError(e);
		}
		await tx
			.insert(teamBilling)
			.values({ teamId, stripeCustomerId: customerId })
			.onConflictDoUpdate({ target: teamBilling.teamId, set: { stripeCustomerId: customerId, updatedAt: new Date() } });
		const quantity = await memberCount(teamId, tx);
		const item = usingFake() ? { plan: seatPriceId(), quantity } : { price: seatPriceId(), quantity };
		let sub: Stripe.Subscription;
		try {
			sub = await s.subscriptions.create({ customer: customerId!, items: [item as Stripe.SubscriptionCreateParams.Item], metadata: { teamId } });
		} catch (e) {
			cardError(e);
		}
		await tx.update(teamBilling).set(fromSubscription(sub)).where(eq(teamBilling.teamId, teamId));
	});
	return state(teamId);
}

/** The owner cancels: the team keeps the Team tier until the paid period ends, then drops to Free. */
export async function cancel(teamId: string): Promise<BillingState> {
	await db.transaction(async (tx) => {
		await lock(tx, teamId);
		const current = await row(teamId, tx);
		if (!current?.stripeSubscriptionId || tierFor(current.status).name !== 'team') throw new ApiError(409, 'not_subscribed', 'This team has no Team subscription to cancel.');
		if (current.cancelAtPeriodEnd) throw new ApiError(409, 'already_cancelled', 'The subscription is already set to end with the paid period.');
		const sub = await stripe().subscriptions.update(current.stripeSubscriptionId, { cancel_at_period_end: true });
		await tx.update(teamBilling).set(fromSubscription(sub)).where(eq(teamBilling.teamId, teamId));
	});
	return state(teamId);
}

/** Make the paid seats equal the member count; a no-op for Free teams. Returns the seats now billed. */
export async function syncSeats(teamId: string): Promise<number | null> {
	return db.transaction(async (tx) => {
		await lock(tx, teamId);
		const current = await row(teamId, tx);
		if (!current?.subscriptionItemId || tierFor(current.status).name !== 'team') return null;
		const quantity = await memberCount(teamId, tx);
		if (quantity === current.seats) return quantity;
		const item = await stripe().subscriptionItems.update(current.subscriptionItemId, { quantity, proration_behavior: 'create_prorations' });
		await tx
			.update(teamBilling)
			.set({ seats: item.quantity ?? quantity, updatedAt: new Date() })
			.where(eq(teamBilling.teamId, teamId));
		return item.quantity ?? quantity;
	});
}

/** syncSeats for callers that must not fail because Stripe is unreachable: the next change or webhook catches up. */
export async function syncSeatsQuietly(teamId: string): Promise<void> {
	try {
		await syncSeats(teamId);
	} catch (e) {
		console.error(`seat sync for team ${teamId} failed: ${(e as Error).message}`);
	}
}
