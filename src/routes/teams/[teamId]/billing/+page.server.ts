import { fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import * as guard from '$lib/server/guard.js';
import * as subscription from '$lib/server/billing/subscription.js';
import * as limits from '$lib/server/billing/limits.js';
import { usingFake } from '$lib/server/billing/stripe.js';
import { TEAM, money } from '$lib/server/billing/tiers.js';
import { ApiError } from '$lib/server/http.js';

/** Test card tokens the local fake Stripe understands; real cards need Stripe's own card form. */
const TEST_CARDS = [
	{ token: 'tok_visa', label: 'Test Visa (accepted)' },
	{ token: 'tok_chargeDeclined', label: 'Test card that is declined' }
];

export const load = (async (event) => {
	const { team, role } = await guard.team(event, event.params.teamId, 'read');
	const billing = await subscription.state(team.id);
	return {
		team,
		isOwner: role === 'owner',
		billing: { ...billing, tier: billing.tier.name, tierLabel: billing.tier.label },
		seatPrice: money(billing.seatCents, billing.currency),
		nextCharge: billing.nextCharge ? money(billing.nextCharge.cents, billing.currency) : null,
		teamSeatPrice: money(TEAM.seatCents, TEAM.currency),
		usage: await limits.overview(team.id),
		testCards: usingFake() ? TEST_CARDS : []
	};
}) satisfies PageServerLoad;

async function attempt(action: string, work: () => Promise<string>) {
	try {
		return { action, notice: await work() };
	} catch (e) {
		if (e instanceof ApiError) return fail(e.status, { action, error: e.message });
		throw e;
	}
}

export const actions = {
	subscribe: async (event) => {
		const { team, user } = await guard.team(event, event.params.teamId, 'own');
		const token = String((await event.request.formData()).get('cardToken') ?? '').trim();
		if (!/^tok_[A-Za-z0-9_]{1,64}$/.test(token)) return fail(400, { action: 'subscribe', error: 'cardToken: choose a card (a Stripe card token such as tok_visa).' });
		return attempt('subscribe', async () => {
			const s = await subscription.subscribe(team.id, user, token);
			return `Subscribed: ${s.seats} seat${s.seats === 1 ? '' : 's'} on the Team tier.`;
		});
	},
	cancel: async (event) => {
		const { team } = await guard.team(event, event.params.teamId, 'own');
		return attempt('cancel', async () => {
			const s = await subscription.cancel(team.id);
			return `Cancelled. The Team tier stays until ${s.currentPeriodEnd?.toISOString().slice(0, 10) ?? 'the end of the paid period'}; nothing is deleted afterwards.`;
		});
	}
} satisfies Actions;
