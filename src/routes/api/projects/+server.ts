import { json } from '@sveltejs/kit';
import { api, body, ApiError } from '$lib/server/http.js';
import * as guard from '$lib/server/guard.js';
import * as projects from '$lib/server/projects.js';
import { projectCreateApi } from '$lib/schemas/project.js';

/** GET /api/projects?teamId=… — the team's projects. */
export const GET = api(async (event) => {
	const teamId = event.url.searchParams.get('teamId');
	if (!teamId) throw new ApiError(400, 'invalid', 'Query parameter teamId is required.', { teamId: 'Required.' });
	const { team } = await guard.team(event, teamId, 'read');
	return json({ projects: await projects.list(team.id) });
});

/** POST /api/projects { teamId, name, description? } */
export const POST = api(async (event) => {
	await guard.user(event);
	const input = await body(event, projectCreateApi);
	const { team, user } = await guard.team(event, input.teamId, 'edit');
	return json({ project: await projects.create(team.id, user.id, input) }, { status: 201 });
});
