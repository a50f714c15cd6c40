import { error } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';
import * as guard from '$lib/server/guard.js';
import * as comparisons from '$lib/server/comparisons.js';

export const load = (async (event) => {
	const { team, comparison } = await guard.comparison(event, event.params.comparisonId, 'read');
	if (comparison.teamId !== event.params.teamId) error(404, { code: 'not_found', message: 'No such comparison.' });
	return { team, comparison: { id: comparison.id, name: comparison.name, createdAt: comparison.createdAt }, table: await comparisons.table(team.id, comparison.planIds) };
}) satisfies PageServerLoad;
