/** Sign in through the real magic-link flow: ask for a link, read it from the fake inbox, follow it. */
import { inject } from 'vitest';

export const baseUrl = () => inject('baseUrl');
export const inboxUrl = () => inject('inboxUrl');

interface InboxMail {
	id: string;
	time: string;
	subject: string;
	text: string;
	to: { address: string }[];
}

/** Newest mail to an address, waiting for it to arrive. */
export async function latestMail(address: string, after = 0, timeoutMs = 15_000): Promise<InboxMail> {
	const until = Date.now() + timeoutMs;
	while (Date.now() < until) {
		const all = (await (await fetch(`${inboxUrl()}/api/email`)).json()) as InboxMail[];
		const mine = all.filter((m) => m.to.some((t) => t.address === address) && Date.parse(m.time) >= after - 1000);
		if (mine.length) return mine[mine.length - 1];
		await new Promise((r) => setTimeout(r, 200));
	}
	throw new Error(`no mail to ${address} within ${timeoutMs} ms`);
}

export function linkIn(mail: InboxMail): string {
	const m = mail.text.match(/https?:\/\/\S+/);
	if (!m) throw new Error(`no link in mail "${mail.subject}"`);
	return m[0];
}

/** A fresh address in 198.18.0.0/15, the range set aside for network tests (RFC 2544). */
export const testClientAddress = () => `198.18.${Math.floor(Math.random() * 256)}.${Math.floor(Math.random() * 256)}`;

/** Ask for a sign-in link; returns the link from the inbox. */
export async function requestLink(email: string): Promise<string> {
	const before = Date.now();
	const res = await fetch(`${baseUrl()}/signin`, {
		method: 'POST',
		// each request from its own client address (the test server trusts x-forwarded-for), so the per-client sign-in limit never trips here
		headers: { origin: baseUrl(), 'content-type': 'application/x-www-form-urlencoded', 'x-forwarded-for': testClientAddress() },
		body: new URLSearchParams({ providerId: 'nodemailer', email, redirectTo: '/' }),
		redirect: 'manual'
	});
	if (res.status >= 400) throw new Error(`sign-in request failed: ${res.status}`);
	return linkIn(await latestMail(email, before));
}

/** Follow a magic link; returns the session cookie header value, or null when the link did not sign in. */
export async function followLink(link: string): Promise<{ cookie: string | null; location: string | null }> {
	const res = await fetch(link, { redirect: 'manual' });
	const cookies = res.headers.getSetCookie().map((c) => c.split(';')[0]);
	const session = cookies.find((c) => c.includes('session-token=') && !c.endsWith('='));
	return { cookie: session ?? null, location: res.headers.get('location') };
}

export async function signIn(email: string): Promise<string> {
	const { cookie } = await followLink(await requestLink(email));
	if (!cookie) throw new Error(`sign-in for ${email} gave no session cookie`);
	return cookie;
}

/** fetch against the app with a session cookie and a same-origin Origin header. */
export function client(cookie: string | null) {
	return (path: string, init: RequestInit & { json?: unknown } = {}) => {
		const headers = new Headers(init.headers);
		if (cookie) headers.set('cookie', cookie);
		headers.set('origin', baseUrl());
		let body = init.body;
		if (init.json !== undefined) {
			headers.set('content-type', 'application/json');
			body = JSON.stringify(init.json);
		}
		return fetch(`${baseUrl()}${path}`, { ...init, headers, body, redirect: 'manual' });
	};
}
