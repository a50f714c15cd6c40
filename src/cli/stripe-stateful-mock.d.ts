// The local fake Stripe API ships without types; only what src/cli/fake-stripe.ts uses is declared.
declare module 'stripe-stateful-mock' {
	import type { IncomingMessage, ServerResponse } from 'node:http';
	const mock: { createExpressApp(): (req: IncomingMessage, res: ServerResponse) => void };
	export default mock;
}

declare module 'stripe-stateful-mock/dist/api/subscriptions.js' {
	interface FakeSubscription {
		id: string;
		status: string;
		cancel_at_period_end: boolean;
		cancel_at: number | null;
		canceled_at: number | null;
		ended_at: number | null;
		current_period_end: number;
		metadata: Record<string, string>;
	}
	const mod: { subscriptions: { retrieve(accountId: string, id: string, param: string): FakeSubscription } };
	export default mod;
}
