import type { PageServerLoad } from './$types';
import * as guard from '$lib/server/guard.js';
import * as uploads from '$lib/server/uploads/index.js';

export const load = (async (event) => {
	const { team, role } = await guard.team(event, event.params.teamId, 'read');
	const limitBytes = uploads.limitBytes();
	return {
		team,
		uploads: await uploads.list(team.id),
		limitBytes,
		limitText: uploads.formatLimit(limitBytes),
		badShare: uploads.BAD_LINE_SHARE,
		canEdit: guard.allows(role, 'edit')
	};
}) satisfies PageServerLoad;
