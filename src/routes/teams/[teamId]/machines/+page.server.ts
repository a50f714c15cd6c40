import type { PageServerLoad } from './$types';
import * as guard from '$lib/server/guard.js';
import * as machines from '$lib/server/machines.js';
import { MACHINE_PRESETS } from '$lib/engine/model/presets.js';

export const load = (async (event) => {
	const { team, role } = await guard.team(event, event.params.teamId, 'read');
	return { team, canEdit: guard.allows(role, 'edit'), machines: await machines.list(team.id, { includeRetired: true }), presets: MACHINE_PRESETS };
}) satisfies PageServerLoad;
