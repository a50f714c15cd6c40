import { fail, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { signIn } from '../../auth.js';
import { safeRedirect, signInForm } from '$lib/schemas/signin.js';
import * as ratelimit from '$lib/server/ratelimit.js';

export const load = (async (event) => {
	const redirectTo = safeRedirect(event.url.searchParams.get('redirectTo'));
	if ((await event.locals.auth())?.user) redirect(303, redirectTo);
	return { redirectTo };
}) satisfies PageServerLoad;

export const actions = {
	// Validate first on a clone: Auth.js reads the body itself.
	default: async (event) => {
		const form = Object.fromEntries(await event.request.clone().formData());
		const parsed = signInForm.safeParse(form);
		if (!parsed.success) {
			return fail(400, { email: String(form.email ?? ''), error: parsed.error.issues[0].message });
		}
		const refusal = await ratelimit.signInRefusal(parsed.data.email, event);
		if (refusal) return fail(429, { email: parsed.data.email, error: refusal });
		await signIn(event);
	}
} satisfies Actions;
