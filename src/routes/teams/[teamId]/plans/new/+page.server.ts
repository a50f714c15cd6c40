import { error, redirect } from '@sveltejs/kit';
import { fail, superValidate, setError } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import type { Actions, PageServerLoad } from './$types';
import * as guard from '$lib/server/guard.js';
import * as plans from '$lib/server/plans.js';
import * as editor from '$lib/server/plan-editor.js';
import * as estimates from '$lib/server/estimates.js';
import { ApiError } from '$lib/server/http.js';
import { planEditorSchema } from '$lib/schemas/plan-api.js';

const schema = zod4(planEditorSchema);

export const load = (async (event) => {
	const projectId = event.url.searchParams.get('project') ?? '';
	const { team, project } = await guard.project(event, projectId, 'edit');
	if (project.teamId !== event.params.teamId) error(404, { code: 'not_found', message: 'No such project.' });
	const choices = await editor.machineChoices(team.id);
	const initial = editor.defaultPlan(choices);
	let fromUpload: { id: string; fileName: string; rows: number } | null = null;
	const uploadId = event.url.searchParams.get('fromUpload');
	if (uploadId) {
		// The sample's shape fills the dataset section; the full row count is the user's to give (?rows=).
		const res = await event.fetch(`/api/uploads/${encodeURIComponent(uploadId)}`);
		const upload = res.ok ? (await res.json()).upload : null;
		const f = upload?.planFields;
		if (f) {
			const rows = Number(event.url.searchParams.get('rows'));
			const fullRows = Number.isInteger(rows) && rows >= 1 ? rows : initial.dataset.rows;
			initial.dataset = {
				rows: fullRows,
				features: f.features,
				nnzPerRow: Math.min(f.nnzPerRow, f.features),
				positiveFraction: Math.min(0.999, Math.max(0.001, f.positiveFraction)),
				valueKind: f.valueKind,
				format: f.format,
				compressed: f.compressed,
				...(f.bytesPerRow > 0 && !f.compressed && { bytesOnDisk: Math.round(fullRows * f.bytesPerRow) })
			};
			fromUpload = { id: upload.id, fileName: upload.fileName, rows: upload.profile?.rows ?? 0 };
		}
	}
	return {
		team,
		project,
		choices,
		fromUpload,
		form: await superValidate(initial, schema, { errors: false }),
		estimate: await estimates.forPlan(team.id, initial)
	};
}) satisfies PageServerLoad;

export const actions = {
	save: async (event) => {
		const projectId = event.url.searchParams.get('project') ?? '';
		const { project, user } = await guard.project(event, projectId, 'edit');
		const form = await superValidate(event, schema);
		if (!form.valid) return fail(400, { form });
		let id: string;
		try {
			id = await plans.create({ teamId: project.teamId, projectId: project.id, userId: user.id, name: form.data.name, plan: form.data });
		} catch (e) {
			if (e instanceof ApiError && e.fields?.name) return setError(form, 'name', e.message, { status: 409 });
			throw e;
		}
		redirect(303, `/teams/${project.teamId}/plans/${id}`);
	}
} satisfies Actions;
