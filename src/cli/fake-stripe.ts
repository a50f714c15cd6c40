/**
 * The local fake Stripe API for `npm start` and the tests: stripe-stateful-mock on 127.0.0.1,
 * plus the two subscription routes it lacks (update, cancel), kept thin and in memory like the rest.
 */
import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import mock from 'stripe-stateful-mock';
import fakeSubscriptions from 'stripe-stateful-mock/dist/api/subscriptions.js';

export interface FakeStripe {
	url: string;
	port: number;
	close: () => Promise<void>;
}

const SUBSCRIPTION = /^\/v1\/subscriptions\/(sub_[A-Za-z0-9]+)$/;

function send(res: ServerResponse, status: number, body: unknown) {
	res.writeHead(status, { 'content-type': 'application/json' });
	res.end(JSON.stringify(body));
}

async function readForm(req: IncomingMessage): Promise<URLSearchParams> {
	const chunks: Buffer[] = [];
	for await (const c of req) chunks.push(c as Buffer);
	return new URLSearchParams(Buffer.concat(chunks).toString('utf8'));
}

/** Like the fake itself: a test secret key as a bearer token or as the basic-auth user name. */
function testKey(header: string | undefined): boolean {
	if (!header) return false;
	if (header.startsWith('Bearer ')) return header.slice(7).startsWith('sk_test_');
	if (header.startsWith('Basic ')) return Buffer.from(header.slice(6), 'base64').toString('utf8').startsWith('sk_test_');
	return false;
}

/** POST /v1/subscriptions/:id (cancel_at_period_end, metadata) and DELETE /v1/subscriptions/:id (cancel now). */
async function subscriptionRoute(req: IncomingMessage, res: ServerResponse, id: string): Promise<void> {
	if (!testKey(req.headers.authorization)) return send(res, 401, { error: { type: 'invalid_request_error', message: 'Invalid API Key provided.' } });
	let sub;
	try {
		sub = fakeSubscriptions.subscriptions.retrieve(String(req.headers['stripe-account'] ?? 'acct_default'), id, 'id');
	} catch {
		return send(res, 404, { error: { type: 'invalid_request_error', code: 'resource_missing', message: `No such subscription: ${id}` } });
	}
	const form = await readForm(req);
	const now = Math.floor(Date.now() / 1000);
	if (req.method === 'DELETE') {
		Object.assign(sub, { status: 'canceled', canceled_at: now, ended_at: now });
	} else {
		const cancel = form.get('cancel_at_period_end');
		if (cancel !== null) {
			sub.cancel_at_period_end = cancel === 'true';
			sub.cancel_at = sub.cancel_at_period_end ? sub.current_period_end : null;
			sub.canceled_at = sub.cancel_at_period_end ? now : null;
		}
		for (const [key, value] of form) {
			const m = key.match(/^metadata\[(.+)\]$/);
			if (m) sub.metadata[m[1]] = value;
		}
	}
	send(res, 200, sub);
}

/** Start the fake on 127.0.0.1 (port 0 picks a free one). */
export async function startFakeStripe(port = 0): Promise<FakeStripe> {
	const app = mock.createExpressApp();
	const server: Server = createServer((req, res) => {
		const m = (req.url ?? '').split('?')[0].match(SUBSCRIPTION);
		if (m && (req.method === 'POST' || req.method === 'DELETE')) {
			subscriptionRoute(req, res, m[1]).catch((e) => send(res, 500, { error: { type: 'api_error', message: (e as Error).message } }));
			return;
		}
		app(req, res);
	});
	await new Promise<void>((resolve, reject) => {
		server.once('error', reject);
		server.listen(port, '127.0.0.1', () => resolve());
	});
	const actual = (server.address() as AddressInfo).port;
	return {
		url: `http://127.0.0.1:${actual}`,
		port: actual,
		close: () => new Promise((resolve) => server.close(() => resolve()))
	};
}
