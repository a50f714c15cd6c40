/**
 * The Stripe client. With STRIPE_API_BASE (or no STRIPE_SECRET_KEY) it talks to the local fake on loopback;
 * with a real secret key and no base it talks to Stripe itself.
 */
import Stripe from 'stripe';
import { env } from '$env/dynamic/private';

/** The fake accepts any key starting with sk_test_. */
const FAKE_KEY = 'sk_test_loadline_local_fake';
/** Only for local runs and tests; production sets STRIPE_WEBHOOK_SECRET from the Stripe dashboard. */
export const DEV_WEBHOOK_SECRET = 'whsec_loadline_local_dev_only';
export const DEFAULT_FAKE_BASE = 'http://127.0.0.1:12111';
const FAKE_SEAT_PLAN = 'loadline-team-seat';

let client: Stripe | null = null;

function apiBase(): string | null {
	return env.STRIPE_API_BASE || (env.STRIPE_SECRET_KEY ? null : DEFAULT_FAKE_BASE);
}

export function usingFake(): boolean {
	return apiBase() !== null;
}

export function stripe(): Stripe {
	if (client) return client;
	const base = apiBase();
	const config: Stripe.StripeConfig = { maxNetworkRetries: 1, timeout: 15_000, telemetry: false };
	if (base) {
		const u = new URL(base);
		Object.assign(config, { host: u.hostname, port: Number(u.port || 80), protocol: u.protocol === 'https:' ? 'https' : 'http' });
	}
	client = new Stripe(env.STRIPE_SECRET_KEY || FAKE_KEY, config);
	return client;
}

export function webhookSecret(): string {
	return env.STRIPE_WEBHOOK_SECRET || DEV_WEBHOOK_SECRET;
}

/** The per-seat monthly price id: STRIPE_SEAT_PRICE in production, a plan made on demand in the fake. */
export function seatPriceId(): string {
	return env.STRIPE_SEAT_PRICE || FAKE_SEAT_PLAN;
}
