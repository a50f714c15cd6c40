import { error } from '@sveltejs/kit';
import { fail, message, superValidate, setError } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import type { Actions, PageServerLoad } from './$types';
import * as guard from '$lib/server/guard.js';
import * as plans from '$lib/server/plans.js';
import * as editor from '$lib/server/plan-editor.js';
import * as estimates from '$lib/server/estimates.js';
import * as uploads from '$lib/server/uploads/index.js';
import { ApiError } from '$lib/server/http.js';
import { planEditorSchema } from '$lib/schemas/plan-api.js';
import { planSchema } from '$lib/schemas/plan.js';

const schema = zod4(planEditorSchema);

export const load = (async (event) => {
	const { team, plan, role } = await guard.plan(event, event.params.planId, 'read');
	if (plan.teamId !== event.params.teamId) error(404, { code: 'not_found', message: 'No such plan.' });
	const input = planSchema.parse(plan.input);
	const canEdit = guard.allows(role, 'edit');
	return {
		team,
		plan: { id: plan.id, name: plan.name, projectId: plan.projectId, projectName: plan.projectName, author: plan.author, updatedAt: plan.updatedAt, calibrationId: plan.calibrationId },
		canEdit,
		// parsed samples a calibration may run on instead of synthetic data
		samples: canEdit ? (await uploads.ready(team.id)).map((u) => ({ id: u.id, fileName: u.fileName, rows: u.rows })) : [],
		choices: await editor.machineChoices(team.id),
		revisions: (await plans.revisions(plan.id)).map((r) => ({ id: r.id, p50Seconds: r.p50Seconds, createdAt: r.createdAt, author: r.author, calibrationId: r.calibrationId })),
		form: await superValidate({ ...input, name: plan.name }, schema, { errors: false }),
		estimate: await estimates.forPlan(team.id, input, plan.calibrationId)
	};
}) satisfies PageServerLoad;

export const actions = {
	save: async (event) => {
		const { plan, user } = await guard.plan(event, event.params.planId, 'edit');
		const form = await superValidate(event, schema);
		if (!form.valid) return fail(400, { form });
		try {
			await plans.update(plan, user.id, { name: form.data.name, plan: form.data });
		} catch (e) {
			if (e instanceof ApiError && e.fields?.name) return setError(form, 'name', e.message, { status: 409 });
			throw e;
		}
		return message(form, 'Saved. The estimate snapshot and a revision were stored.');
	}
} satisfies Actions;
