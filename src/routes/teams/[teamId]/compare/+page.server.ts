import type { PageServerLoad } from './$types';
import * as guard from '$lib/server/guard.js';
import * as plans from '$lib/server/plans.js';
import * as comparisons from '$lib/server/comparisons.js';

// ?plans=a,b,c picks plans; the table is built on the server from the team's own plans only.
export const load = (async (event) => {
	const { team } = await guard.team(event, event.params.teamId, 'read');
	const picked = (event.url.searchParams.get('plans') ?? '').split(',').filter(Boolean).slice(0, 12);
	return {
		team,
		all: await plans.listForTeam(team.id),
		picked,
		table: picked.length ? await comparisons.table(team.id, picked) : null,
		saved: await comparisons.list(team.id)
	};
}) satisfies PageServerLoad;
