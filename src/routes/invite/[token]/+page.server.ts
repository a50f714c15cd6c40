import { fail, redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import * as guard from '$lib/server/guard.js';
import * as invitations from '$lib/server/invitations.js';
import { ApiError } from '$lib/server/http.js';

// Signed-out visitors see what they are invited to, then sign in and come back here (redirectTo keeps the link).
export const load = (async (event) => {
	const session = await event.locals.auth();
	const signedInAs = session?.user?.email ?? null;
	const invite = await invitations.lookup(event.params.token);
	const back = `/signin?redirectTo=${encodeURIComponent(event.url.pathname)}`;
	return { invite, signedInAs, signInUrl: back, hours: invitations.INVITE_HOURS };
}) satisfies PageServerLoad;

export const actions = {
	accept: async (event) => {
		const me = await guard.user(event);
		try {
			const { teamId } = await invitations.accept(event.params.token, me);
			redirect(303, `/teams/${teamId}/projects`);
		} catch (e) {
			if (e instanceof ApiError) return fail(e.status, { code: e.code, error: e.message });
			throw e;
		}
	}
} satisfies Actions;
