import { json, type Handle } from '@sveltejs/kit';
import { sequence } from '@sveltejs/kit/hooks';
import { handle as authHandle } from './auth.js';
import { errorBody } from '$lib/server/http.js';
import * as ratelimit from '$lib/server/ratelimit.js';

const UNSAFE = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);

/** API routes take JSON, so SvelteKit's form-only origin check does not cover them: refuse cross-site writes here. */
const apiOrigin: Handle = async ({ event, resolve }) => {
	const { request, url } = event;
	if (url.pathname.startsWith('/api/') && UNSAFE.has(request.method)) {
		const origin = request.headers.get('origin');
		const site = request.headers.get('sec-fetch-site');
		if ((origin !== null && origin !== url.origin) || site === 'cross-site') {
			return json(errorBody('cross_origin', 'Cross-site requests to the API are refused.'), { status: 403 });
		}
	}
	return resolve(event);
};

/** Auth.js's own sign-in endpoint sends mail too, so it shares the sign-in page's rate limit. */
const signInLimit: Handle = async ({ event, resolve }) => {
	if (event.request.method === 'POST' && event.url.pathname.startsWith('/auth/signin/')) {
		const email = (await event.request.clone().formData().catch(() => null))?.get('email');
		if (typeof email === 'string' && email) {
			const refusal = await ratelimit.signInRefusal(email, event);
			if (refusal) return new Response(refusal, { status: 429, headers: { 'content-type': 'text/plain; charset=utf-8' } });
		}
	}
	return resolve(event);
};

const securityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	response.headers.set('X-Frame-Options', 'DENY');
	response.headers.set('X-Content-Type-Options', 'nosniff');
	response.headers.set('Referrer-Policy', 'same-origin');
	return response;
};

export const handle = sequence(apiOrigin, signInLimit, authHandle, securityHeaders);
