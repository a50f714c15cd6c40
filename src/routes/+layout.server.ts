import type { LayoutServerLoad } from './$types';
import * as teams from '$lib/server/teams.js';

// Only what the header needs; each page authorizes itself through the guard.
export const load = (async (event) => {
	const session = await event.locals.auth();
	const id = session?.user?.id;
	return {
		user: id ? { id, email: session.user?.email ?? '', name: session.user?.name ?? null } : null,
		teams: id ? await teams.listForUser(id) : []
	};
}) satisfies LayoutServerLoad;
