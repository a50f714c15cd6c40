import { json } from '@sveltejs/kit';
import { api, check, readJson, ApiError, query } from '$lib/server/http.js';
import * as guard from '$lib/server/guard.js';
import * as plans from '$lib/server/plans.js';
import { planCreate, planDuplicate, planListQuery } from '$lib/schemas/plan-api.js';

/** GET /api/plans?projectId=…[&sort&dir&q&recommended&verdict&page&pageSize][&format=csv] or ?teamId=… (all plans of a team). */
export const GET = api(async (event) => {
	const params = event.url.searchParams;
	const teamId = params.get('teamId');
	if (teamId) {
		const { team } = await guard.team(event, teamId, 'read');
		return json({ plans: await plans.listForTeam(team.id) });
	}
	const projectId = params.get('projectId');
	if (!projectId) throw new ApiError(400, 'invalid', 'Give projectId or teamId.', { projectId: 'Required without teamId.' });
	const { project } = await guard.project(event, projectId, 'read');
	if (params.get('format') === 'csv') {
		return new Response(await plans.csv(project.id), {
			headers: { 'content-type': 'text/csv; charset=utf-8', 'content-disposition': `attachment; filename="plans.csv"` }
		});
	}
	return json(await plans.listPage(project.id, query(params, planListQuery)));
});

/** POST /api/plans { projectId, name?, plan, calibrationId? } (create or import PLAN.json) or { duplicateOf, name? }. */
export const POST = api(async (event) => {
	await guard.user(event);
	const raw = await readJson(event);
	if (raw && typeof raw === 'object' && 'duplicateOf' in raw) {
		const dup = check(raw, planDuplicate);
		const { plan, user } = await guard.plan(event, dup.duplicateOf, 'edit');
		const id = await plans.duplicate(plan, user.id, dup.name);
		return json({ plan: await plans.get(id) }, { status: 201 });
	}
	const input = check(raw, planCreate);
	const { project, user } = await guard.project(event, input.projectId, 'edit');
	const name = input.name ?? input.plan.name;
	if (!name) throw new ApiError(400, 'invalid', 'Invalid name: name is required (give "name", or a "name" inside the plan).', { name: 'name is required' });
	const id = await plans.create({ teamId: project.teamId, projectId: project.id, userId: user.id, name, plan: input.plan, calibrationId: input.calibrationId });
	return json({ plan: await plans.get(id) }, { status: 201 });
});
