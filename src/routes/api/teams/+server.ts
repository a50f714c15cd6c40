import { json } from '@sveltejs/kit';
import { api } from '$lib/server/http.js';
import * as guard from '$lib/server/guard.js';
import * as teams from '$lib/server/teams.js';

/** GET /api/teams — the teams the caller belongs to, with their role in each. */
export const GET = api(async (event) => {
	const me = await guard.user(event);
	return json({ teams: await teams.listForUser(me.id) });
});
