import { json } from '@sveltejs/kit';
import { api, body } from '$lib/server/http.js';
import * as guard from '$lib/server/guard.js';
import * as plans from '$lib/server/plans.js';
import { planUpdate } from '$lib/schemas/plan-api.js';

/** GET /api/plans/[id] — the plan with its snapshot; ?format=plan downloads PLAN.json. */
export const GET = api(async (event) => {
	const { plan } = await guard.plan(event, event.params.id!, 'read');
	if (event.url.searchParams.get('format') === 'plan') {
		const file = plan.name.replace(/[^\w.-]+/g, '-').slice(0, 80) || 'plan';
		return new Response(JSON.stringify(plans.planJson(plan), null, 2) + '\n', {
			headers: { 'content-type': 'application/json', 'content-disposition': `attachment; filename="${file}.json"` }
		});
	}
	return json({ plan, revisions: await plans.revisions(plan.id) });
});

/** PATCH /api/plans/[id] { name?, plan?, calibrationId? } — save; a new revision keeps the old answer. */
export const PATCH = api(async (event) => {
	const { plan, user } = await guard.plan(event, event.params.id!, 'edit');
	const change = await body(event, planUpdate);
	await plans.update(plan, user.id, change);
	return json({ plan: await plans.get(plan.id) });
});

export const DELETE = api(async (event) => {
	const { plan } = await guard.plan(event, event.params.id!, 'edit');
	await plans.remove(plan.id);
	return new Response(null, { status: 204 });
});
