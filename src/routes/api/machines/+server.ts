import { json } from '@sveltejs/kit';
import { api, body, ApiError } from '$lib/server/http.js';
import * as guard from '$lib/server/guard.js';
import * as machines from '$lib/server/machines.js';
import { machineCreate } from '$lib/schemas/machine-api.js';

/** GET /api/machines?teamId=…[&retired=1] — the team's machine catalog. */
export const GET = api(async (event) => {
	const teamId = event.url.searchParams.get('teamId');
	if (!teamId) throw new ApiError(400, 'invalid', 'Query parameter teamId is required.', { teamId: 'Required.' });
	const { team } = await guard.team(event, teamId, 'read');
	return json({ machines: await machines.list(team.id, { includeRetired: event.url.searchParams.get('retired') === '1' }) });
});

/** POST /api/machines { teamId, name, profile } or { teamId, name, probe } (the output of `loadline probe-machine --json`). */
export const POST = api(async (event) => {
	await guard.user(event);
	const input = await body(event, machineCreate);
	const { team, user } = await guard.team(event, input.teamId, 'edit');
	const [profile, source] = input.probe ? [input.probe.machine, 'probe' as const] : [input.profile!, 'manual' as const];
	return json({ machine: await machines.create(team.id, user.id, input.name, profile, source) }, { status: 201 });
});
