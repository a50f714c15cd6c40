/** Authorize a caller on a resource found by id (plan, calibration job, upload): 404 for non-members, as the guard does for teams. */
import type { RequestEvent } from '@sveltejs/kit';
import * as guard from '../guard.js';
import * as teams from '../teams.js';
import { ApiError } from '../http.js';

export const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

const needWords: Record<guard.Need, string> = {
	read: 'read',
	edit: 'run calibrations or upload samples (editor or above)',
	manage: 'do this (admin or above)',
	own: 'do this (owner)'
};

/** The caller's membership in the team owning the resource; `what` names it in the 404. */
export async function inTeam(event: RequestEvent, teamId: string | null | undefined, need: guard.Need, what: string) {
	const me = await guard.user(event);
	const m = teamId ? await teams.membership(teamId, me.id) : null;
	if (!m) throw new ApiError(404, 'not_found', `No such ${what}.`);
	if (!guard.allows(m.role, need)) throw new ApiError(403, 'forbidden', `Your role (${m.role}) cannot ${needWords[need]} in this team.`);
	return { user: me, team: m, role: m.role };
}
