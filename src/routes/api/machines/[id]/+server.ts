import { json } from '@sveltejs/kit';
import { api, body } from '$lib/server/http.js';
import * as guard from '$lib/server/guard.js';
import * as machines from '$lib/server/machines.js';
import { machineUpdate } from '$lib/schemas/machine-api.js';

export const GET = api(async (event) => {
	const { machine } = await guard.machine(event, event.params.id!, 'read');
	return json({ machine });
});

/** PATCH /api/machines/[id] { name?, profile?, retired? } — retiring keeps the machine for old plans but hides it from the editor. */
export const PATCH = api(async (event) => {
	const { machine } = await guard.machine(event, event.params.id!, 'edit');
	const change = await body(event, machineUpdate);
	return json({ machine: await machines.update(machine.id, change) });
});
