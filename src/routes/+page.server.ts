import { redirect } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';
import * as guard from '$lib/server/guard.js';
import * as teams from '$lib/server/teams.js';

// Home is the first team's projects; signed-out visitors go to sign-in.
export const load = (async (event) => {
	const me = await guard.user(event);
	const mine = await teams.listForUser(me.id);
	if (mine.length > 0) redirect(303, `/teams/${mine[0].id}/projects`);
	return {};
}) satisfies PageServerLoad;
