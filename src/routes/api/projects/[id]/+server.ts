import { json } from '@sveltejs/kit';
import { api, body } from '$lib/server/http.js';
import * as guard from '$lib/server/guard.js';
import * as projects from '$lib/server/projects.js';
import { projectUpdate } from '$lib/schemas/project.js';

export const GET = api(async (event) => {
	const { project } = await guard.project(event, event.params.id!, 'read');
	return json({ project });
});

export const PATCH = api(async (event) => {
	const { project } = await guard.project(event, event.params.id!, 'edit');
	const input = await body(event, projectUpdate);
	return json({ project: await projects.update(project.id, input) });
});

export const DELETE = api(async (event) => {
	const { project, team } = await guard.project(event, event.params.id!, 'manage');
	await projects.remove(project.id, team.id);
	return new Response(null, { status: 204 });
});
