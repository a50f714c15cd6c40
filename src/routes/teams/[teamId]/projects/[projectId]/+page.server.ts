import { error } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';
import * as guard from '$lib/server/guard.js';
import * as plans from '$lib/server/plans.js';
import { fieldErrors } from '$lib/server/http.js';
import { planListQuery } from '$lib/schemas/plan-api.js';

export const load = (async (event) => {
	const { team, project, role } = await guard.project(event, event.params.projectId, 'read');
	// A project is addressed under its own team only.
	if (project.teamId !== event.params.teamId) error(404, { code: 'not_found', message: 'No such project.' });
	const parsed = planListQuery.safeParse(Object.fromEntries(event.url.searchParams));
	const query = parsed.success ? parsed.data : planListQuery.parse({});
	return {
		team,
		project,
		canEdit: guard.allows(role, 'edit'),
		query,
		queryProblem: parsed.success ? null : Object.values(fieldErrors(parsed.error))[0],
		page: await plans.listPage(project.id, query)
	};
}) satisfies PageServerLoad;
