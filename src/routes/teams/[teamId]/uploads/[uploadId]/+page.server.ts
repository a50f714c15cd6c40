import { error } from '@sveltejs/kit';
import type { PageServerLoad } from './$types';
import * as guard from '$lib/server/guard.js';
import * as uploads from '$lib/server/uploads/index.js';
import * as projects from '$lib/server/projects.js';
import { UUID } from '$lib/server/jobs/access.js';

export const load = (async (event) => {
	const { team, role } = await guard.team(event, event.params.teamId, 'read');
	const row = UUID.test(event.params.uploadId) ? await uploads.getInTeam(event.params.uploadId, team.id) : null;
	if (!row) error(404, { code: 'not_found', message: 'No such upload.' });
	const canEdit = guard.allows(role, 'edit');
	return {
		team,
		upload: uploads.view(row),
		badShare: uploads.BAD_LINE_SHARE,
		projects: canEdit ? (await projects.list(team.id)).map((p) => ({ id: p.id, name: p.name })) : [],
		canEdit
	};
}) satisfies PageServerLoad;
