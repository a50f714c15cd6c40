/** Billing against the local fake Stripe: subscribe, seats follow members, cancel, lapse to Free without losing anything. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { client, latestMail, linkIn, signIn } from '../helpers/session.js';
import { addMember, closeDb, db, makeProject, makeTeam, makeUser, unique } from '../helpers/factories.js';
import { action } from '../helpers/forms.js';
import { deliver, fakeStripe, subscriptionEvent } from '../helpers/billing.js';
import { teamBilling } from '../../src/lib/server/db/schema.js';

afterAll(closeDb);

async function teamWithOwner(label: string) {
	const team = await makeTeam(unique(label));
	const o = await makeUser('owner');
	await addMember(team.id, o.id, 'owner');
	return { teamId: team.id, owner: await signIn(o.email!) };
}

const billing = async (teamId: string) => (await db().select().from(teamBilling).where(eq(teamBilling.teamId, teamId)))[0];
const quantity = async (subId: string) => (await fakeStripe().subscriptions.retrieve(subId)).items.data[0].quantity;

describe('billing', () => {
	let teamId: string;
	let owner: string;

	beforeAll(async () => {
		({ teamId, owner } = await teamWithOwner('Paying'));
		await addMember(teamId, (await makeUser('editor')).id, 'editor');
	});

	it('subscribes with a test card: a Stripe customer and subscription with one seat per member, shown on the billing page', async () => {
		const r = await action(owner, `/teams/${teamId}/billing?/subscribe`, { cardToken: 'tok_visa' });
		expect(r.status, JSON.stringify(r.data)).toBe(200);
		const row = await billing(teamId);
		expect(row).toMatchObject({ status: 'active', seats: 2, seatPriceCents: 1500, cancelAtPeriodEnd: false });
		expect(row.stripeCustomerId).toMatch(/^cus_/);
		const sub = await fakeStripe().subscriptions.retrieve(row.stripeSubscriptionId!);
		expect(sub.customer).toBe(row.stripeCustomerId);
		expect(sub.metadata.teamId).toBe(teamId);
		expect(sub.items.data[0].quantity).toBe(2);
		const html = await (await client(owner)(`/teams/${teamId}/billing`)).text();
		expect(html).toContain('data-testid="tier">Team<');
		expect(html).toContain('2 × $15.00 per month');
		expect(html).toContain('$30.00 on ');
		const again = await action(owner, `/teams/${teamId}/billing?/subscribe`, { cardToken: 'tok_visa' });
		expect(again.status).toBe(409);
	});

	it('moves the seat count with the members: an accepted invitation adds one, a removal takes it away', async () => {
		const row = await billing(teamId);
		const newcomer = await makeUser('newcomer');
		const before = Date.now();
		expect((await action(owner, `/teams/${teamId}/members?/invite`, { email: newcomer.email!, role: 'viewer' })).status).toBe(200);
		const link = linkIn(await latestMail(newcomer.email!, before));
		expect((await action(await signIn(newcomer.email!), `${new URL(link).pathname}?/accept`)).status).toBe(303);
		expect(await quantity(row.stripeSubscriptionId!)).toBe(3);
		expect((await billing(teamId)).seats).toBe(3);
		expect((await action(owner, `/teams/${teamId}/members?/remove`, { userId: newcomer.id })).status).toBe(200);
		expect(await quantity(row.stripeSubscriptionId!)).toBe(2);
	});

	it('cancels at the end of the paid period; after the ending event the team is Free, keeps every project and is blocked only beyond the limit', async () => {
		for (let i = 0; i < 12; i++) await makeProject(teamId); // more than Free allows, made while on Team
		const r = await action(owner, `/teams/${teamId}/billing?/cancel`);
		expect(r.status).toBe(200);
		const row = await billing(teamId);
		expect(row.cancelAtPeriodEnd).toBe(true);
		const sub = await fakeStripe().subscriptions.retrieve(row.stripeSubscriptionId!);
		expect(sub.cancel_at_period_end).toBe(true);
		expect(await (await client(owner)(`/teams/${teamId}/billing`)).text()).toContain('ends ');

		// Stripe ends the subscription at the period end and says so by webhook.
		const ended = subscriptionEvent('customer.subscription.deleted', { ...sub, status: 'canceled' });
		const res = await deliver(JSON.stringify(ended));
		expect(await res.json()).toEqual({ received: true, outcome: 'applied' });
		expect((await billing(teamId)).status).toBe('canceled');

		const api = client(owner);
		const listed = (await (await api(`/api/projects?teamId=${teamId}`)).json()).projects as { id: string }[];
		expect(listed).toHaveLength(12);
		for (const p of listed.slice(0, 3)) expect((await api(`/api/projects/${p.id}`)).status).toBe(200);
		const blocked = await api('/api/projects', { method: 'POST', json: { teamId, name: unique('one more') } });
		expect(blocked.status).toBe(402);
		const { error } = await blocked.json();
		expect(error.code).toBe('limit_reached');
		expect(error.message).toContain('The Free tier allows 10 projects per team; this team has 12.');
		expect(error.message).toContain('The Team tier ($15.00 per seat per month) has no limit on projects');
		// editing what exists still works
		expect((await api(`/api/projects/${listed[0].id}`, { method: 'PATCH', json: { description: 'still editable' } })).status).toBe(200);
		for (const p of listed.slice(0, 3)) expect((await api(`/api/projects/${p.id}`, { method: 'DELETE' })).status).toBe(204);
		expect((await api('/api/projects', { method: 'POST', json: { teamId, name: unique('under the limit') } })).status).toBe(201);

		// subscribing again makes a new subscription on the same customer; late events about the old one change nothing
		expect((await action(owner, `/teams/${teamId}/billing?/subscribe`, { cardToken: 'tok_visa' })).status).toBe(200);
		const renewed = await billing(teamId);
		expect(renewed).toMatchObject({ status: 'active', stripeCustomerId: row.stripeCustomerId, cancelAtPeriodEnd: false });
		expect(renewed.stripeSubscriptionId).not.toBe(row.stripeSubscriptionId);
		const late = subscriptionEvent('customer.subscription.updated', { ...sub, status: 'canceled' }, Math.floor(Date.now() / 1000) + 5);
		expect((await (await deliver(JSON.stringify(late))).json()).outcome).toBe('stale');
		expect((await billing(teamId)).status).toBe('active');
	});

	it('refuses a declined card clearly and leaves the team on Free', async () => {
		const t = await teamWithOwner('Declined');
		const r = await action(t.owner, `/teams/${t.teamId}/billing?/subscribe`, { cardToken: 'tok_chargeDeclined' });
		expect(r.status).toBe(402);
		expect(r.data?.error).toBe('The card was not accepted: Your card was declined. Nothing was charged; try another card.');
		expect((await billing(t.teamId))?.status ?? 'none').toBe('none');
		const bad = await action(t.owner, `/teams/${t.teamId}/billing?/subscribe`, { cardToken: "x'; DROP TABLE team_billing;--" });
		expect(bad.status).toBe(400);
		expect(bad.data?.error).toContain('cardToken');
	});

	it('shows the Free limits and what Team unlocks on the billing page, and refuses the 11th project of a Free team', async () => {
		const t = await teamWithOwner('Free');
		for (let i = 0; i < 10; i++) await makeProject(t.teamId);
		const html = await (await client(t.owner)(`/teams/${t.teamId}/billing`)).text();
		expect(html).toContain('10 of 10');
		const form = await action(t.owner, `/teams/${t.teamId}/projects?/create`, { name: unique('eleventh'), description: '' });
		expect(form.status).toBe(402);
		const api = await client(t.owner)('/api/projects', { method: 'POST', json: { teamId: t.teamId, name: unique('eleventh') } });
		expect(api.status).toBe(402);
		expect((await api.json()).error.code).toBe('limit_reached');
	});

	it('lets only one of several concurrent creates take the last free project slot', async () => {
		const t = await teamWithOwner('Racing');
		for (let i = 0; i < 9; i++) await makeProject(t.teamId);
		const api = client(t.owner);
		const answers = await Promise.all(Array.from({ length: 4 }, (_, i) => api('/api/projects', { method: 'POST', json: { teamId: t.teamId, name: unique(`race ${i}`) } })));
		expect(answers.map((r) => r.status).sort()).toEqual([201, 402, 402, 402]);
		expect((await (await api(`/api/projects?teamId=${t.teamId}`)).json()).projects).toHaveLength(10);
	});
});
