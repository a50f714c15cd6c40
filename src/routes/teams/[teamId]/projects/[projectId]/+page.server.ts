import { error } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';
import * as guard from '$lib/server/guard.js';

export const load = (async (event) => {
	const { team, project, role } = await guard.project(event, event.params.projectId, 'read');
	// A project is addressed under its own team only.
	if (project.teamId !== event.params.teamId) error(404, { code: 'not_found', message: 'No such project.' });
	return { team, project, canEdit: guard.allows(role, 'edit') };
}) satisfies PageServerLoad;
