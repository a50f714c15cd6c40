/** The fake Stripe from the tests' side: an SDK client on it, and signed webhook deliveries to the app. */
import Stripe from 'stripe';
import { inject } from 'vitest';
import { baseUrl } from './session.js';

let sdk: Stripe | null = null;
export function fakeStripe(): Stripe {
	const u = new URL(inject('stripeUrl'));
	sdk ??= new Stripe('sk_test_loadline_tests', { host: u.hostname, port: Number(u.port), protocol: 'http' });
	return sdk;
}

let n = 0;
/** A customer.subscription.* event as Stripe would send it. */
export function subscriptionEvent(type: string, sub: Record<string, unknown>, created = Math.floor(Date.now() / 1000)) {
	return { id: `evt_test_${Date.now().toString(36)}_${n++}`, object: 'event', type, created, data: { object: { object: 'subscription', ...sub } } };
}

/** POST a payload to the webhook, signed with the app's secret unless told otherwise. */
export async function deliver(payload: string, opts: { signature?: string | null; timestamp?: number; secret?: string } = {}) {
	const signature =
		opts.signature !== undefined
			? opts.signature
			: fakeStripe().webhooks.generateTestHeaderString({ payload, secret: opts.secret ?? inject('stripeWebhookSecret'), timestamp: opts.timestamp });
	const headers: Record<string, string> = { 'content-type': 'application/json' };
	if (signature !== null) headers['stripe-signature'] = signature;
	return fetch(`${baseUrl()}/api/billing/webhook`, { method: 'POST', headers, body: payload });
}
