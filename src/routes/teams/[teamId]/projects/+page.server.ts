import { fail, superValidate, setError, message } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import type { Actions, PageServerLoad } from './$types';
import * as guard from '$lib/server/guard.js';
import * as projects from '$lib/server/projects.js';
import { ApiError } from '$lib/server/http.js';
import { projectCreate } from '$lib/schemas/project.js';

const schema = zod4(projectCreate);

export const load = (async (event) => {
	const { team, role } = await guard.team(event, event.params.teamId, 'read');
	return {
		team,
		projects: await projects.list(team.id),
		canEdit: guard.allows(role, 'edit'),
		canDelete: guard.allows(role, 'manage'),
		form: await superValidate(schema)
	};
}) satisfies PageServerLoad;

export const actions = {
	create: async (event) => {
		const { team, user } = await guard.team(event, event.params.teamId, 'edit');
		const form = await superValidate(event, schema);
		if (!form.valid) return fail(400, { form });
		try {
			const p = await projects.create(team.id, user.id, form.data);
			return message(form, `Project "${p.name}" created.`);
		} catch (e) {
			if (e instanceof ApiError && e.fields?.name) return setError(form, 'name', e.message, { status: e.status as 409 });
			throw e;
		}
	}
} satisfies Actions;
