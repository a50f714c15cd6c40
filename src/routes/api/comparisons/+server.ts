import { json } from '@sveltejs/kit';
import { api, body, ApiError } from '$lib/server/http.js';
import * as guard from '$lib/server/guard.js';
import * as comparisons from '$lib/server/comparisons.js';
import { comparisonCreate } from '$lib/schemas/comparison.js';

/** GET /api/comparisons?teamId=… — saved comparisons of a team. */
export const GET = api(async (event) => {
	const teamId = event.url.searchParams.get('teamId');
	if (!teamId) throw new ApiError(400, 'invalid', 'Query parameter teamId is required.', { teamId: 'Required.' });
	const { team } = await guard.team(event, teamId, 'read');
	return json({ comparisons: await comparisons.list(team.id) });
});

/** POST /api/comparisons { teamId, name, planIds, notify? } — save a comparison; any member may, viewers included. */
export const POST = api(async (event) => {
	await guard.user(event);
	const input = await body(event, comparisonCreate);
	const { team, user } = await guard.team(event, input.teamId, 'read');
	const saved = await comparisons.create(team.id, user.id, input.name, input.planIds);
	await comparisons.share(team.id, user.name ?? user.email, saved, input.notify);
	return json({ comparison: saved, url: `/teams/${team.id}/compare/${saved.id}` }, { status: 201 });
});
