/** The Stripe webhook: signatures on the raw body, each event id once, late and repeated events change nothing. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { closeDb, db, makeTeam, unique } from '../helpers/factories.js';
import { deliver, fakeStripe, subscriptionEvent } from '../helpers/billing.js';
import { stripeEvents, teamBilling } from '../../src/lib/server/db/schema.js';

let teamId: string;
let subId: string;
afterAll(closeDb);

beforeAll(async () => {
	teamId = (await makeTeam(unique('Hooks'))).id;
	subId = `sub_${unique('hook').replace(/-/g, '')}`;
	await db().insert(teamBilling).values({ teamId, stripeSubscriptionId: subId, subscriptionItemId: 'si_test', status: 'active', seats: 2 });
});

const state = async () => (await db().select().from(teamBilling).where(eq(teamBilling.teamId, teamId)))[0];
const recorded = async (id: string) => db().select().from(stripeEvents).where(eq(stripeEvents.id, id));
const sub = (status: string, seats: number, extra: Record<string, unknown> = {}) => ({
	id: subId,
	status,
	metadata: { teamId },
	cancel_at_period_end: false,
	items: { object: 'list', data: [{ id: 'si_test', object: 'subscription_item', quantity: seats }] },
	...extra
});

describe('webhook signatures', () => {
	it('answers 400 and writes nothing for a missing header, a wrong secret, a tampered body or an old timestamp', async () => {
		const event = subscriptionEvent('customer.subscription.updated', sub('past_due', 9));
		const payload = JSON.stringify(event);
		const missing = await deliver(payload, { signature: null });
		expect(missing.status).toBe(400);
		expect((await missing.json()).error).toEqual({ code: 'missing_signature', message: 'The Stripe-Signature header is missing.' });

		const wrong = await deliver(payload, { secret: 'whsec_not_ours' });
		expect(wrong.status).toBe(400);
		expect((await wrong.json()).error.code).toBe('bad_signature');

		const signed = fakeStripe().webhooks.generateTestHeaderString({ payload, secret: (await import('vitest')).inject('stripeWebhookSecret') });
		const tampered = await deliver(payload.replace('"past_due"', '"canceled"'), { signature: signed });
		expect(tampered.status).toBe(400);

		// 301 s: one past the 300 s tolerance (Stripe's documented default)
		const stale = await deliver(payload, { timestamp: Math.floor(Date.now() / 1000) - 301 });
		expect(stale.status).toBe(400);
		expect((await stale.json()).error.message).toContain('tolerance');

		expect(await recorded(event.id)).toHaveLength(0);
		expect(await state()).toMatchObject({ status: 'active', seats: 2 });
		// the untouched original, correctly signed, is accepted
		expect((await deliver(payload)).status).toBe(200);
		expect(await state()).toMatchObject({ status: 'past_due', seats: 9 });
	});
});

describe('webhook delivery', () => {
	const t0 = Math.floor(Date.now() / 1000) + 100;

	it('applies an event id once: a repeat is acknowledged and changes nothing', async () => {
		const first = subscriptionEvent('customer.subscription.updated', sub('active', 3), t0);
		expect(await (await deliver(JSON.stringify(first))).json()).toEqual({ received: true, outcome: 'applied' });
		const later = subscriptionEvent('customer.subscription.updated', sub('active', 4), t0 + 1);
		await deliver(JSON.stringify(later));
		expect((await state()).seats).toBe(4);
		expect(await (await deliver(JSON.stringify(first))).json()).toEqual({ received: true, outcome: 'duplicate' });
		expect((await state()).seats).toBe(4);
	});

	it('records an older event that arrives after a newer one as stale and keeps the newer state', async () => {
		const newer = subscriptionEvent('customer.subscription.updated', sub('active', 6, { cancel_at_period_end: true }), t0 + 20);
		const older = subscriptionEvent('customer.subscription.updated', sub('past_due', 5), t0 + 10);
		expect((await (await deliver(JSON.stringify(newer))).json()).outcome).toBe('applied');
		expect((await (await deliver(JSON.stringify(older))).json()).outcome).toBe('stale');
		expect(await state()).toMatchObject({ status: 'active', seats: 6, cancelAtPeriodEnd: true });
		expect((await recorded(older.id))[0].outcome).toBe('stale');
	});

	it('has one effect when the same event arrives twice at once', async () => {
		const event = subscriptionEvent('customer.subscription.updated', sub('active', 8), t0 + 30);
		const payload = JSON.stringify(event);
		const signature = fakeStripe().webhooks.generateTestHeaderString({ payload, secret: (await import('vitest')).inject('stripeWebhookSecret') });
		const answers = await Promise.all([deliver(payload, { signature }), deliver(payload, { signature }), deliver(payload, { signature })]);
		const outcomes = (await Promise.all(answers.map((r) => r.json()))).map((b) => b.outcome).sort();
		expect(outcomes).toEqual(['applied', 'duplicate', 'duplicate']);
		expect(await recorded(event.id)).toHaveLength(1);
		expect((await state()).seats).toBe(8);
	});

	it('does not revive an ended subscription with a late update, and ignores types it does not use', async () => {
		await deliver(JSON.stringify(subscriptionEvent('customer.subscription.deleted', sub('canceled', 8), t0 + 40)));
		expect((await state()).status).toBe('canceled');
		const late = subscriptionEvent('customer.subscription.updated', sub('active', 8), t0 + 40);
		expect((await (await deliver(JSON.stringify(late))).json()).outcome).toBe('stale');
		expect((await state()).status).toBe('canceled');
		const other = { id: `evt_${unique('other')}`, object: 'event', type: 'charge.succeeded', created: t0, data: { object: { id: 'ch_1' } } };
		expect((await (await deliver(JSON.stringify(other))).json()).outcome).toBe('ignored');
	});

	it('finds the team of a new subscription by its customer, and records events for unknown teams without effect', async () => {
		const team = (await makeTeam(unique('By customer'))).id;
		const customer = `cus_${unique('c').replace(/-/g, '')}`;
		await db().insert(teamBilling).values({ teamId: team, stripeCustomerId: customer });
		const made = subscriptionEvent('customer.subscription.created', { ...sub('active', 3), id: `sub_${unique('n').replace(/-/g, '')}`, customer, metadata: {} });
		expect((await (await deliver(JSON.stringify(made))).json()).outcome).toBe('applied');
		expect((await db().select().from(teamBilling).where(eq(teamBilling.teamId, team)))[0]).toMatchObject({ status: 'active', seats: 3 });
		const stray = subscriptionEvent('customer.subscription.created', { ...sub('active', 1), id: 'sub_unknown', customer: 'cus_unknown', metadata: { teamId: "x' OR 1=1" } });
		expect((await (await deliver(JSON.stringify(stray))).json()).outcome).toBe('no_team');
	});
});
