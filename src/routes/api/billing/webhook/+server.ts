import { json } from '@sveltejs/kit';
import { api } from '$lib/server/http.js';
import * as webhook from '$lib/server/billing/webhook.js';

/** POST /api/billing/webhook — Stripe's deliveries; authenticated by the signature, not by a session. */
export const POST = api(async (event) => {
	const raw = await event.request.text();
	const event_ = webhook.verify(raw, event.request.headers.get('stripe-signature'));
	return json({ received: true, outcome: await webhook.apply(event_) });
});
