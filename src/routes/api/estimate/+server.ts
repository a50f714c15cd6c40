import { json } from '@sveltejs/kit';
import { api, body } from '$lib/server/http.js';
import * as guard from '$lib/server/guard.js';
import * as estimates from '$lib/server/estimates.js';
import { estimateRequest } from '$lib/schemas/plan-api.js';

/** POST /api/estimate { plan, teamId?, calibrationId?, whatIf? } — the estimate for a plan, without saving it; whatIf: false leaves out the curves. */
export const POST = api(async (event) => {
	await guard.user(event);
	const input = await body(event, estimateRequest);
	const teamId = input.teamId ? (await guard.team(event, input.teamId, 'read')).team.id : null;
	return json(await estimates.live(teamId, input.plan, input.calibrationId, { whatIf: input.whatIf }));
});
