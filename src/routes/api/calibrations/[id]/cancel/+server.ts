import { json } from '@sveltejs/kit';
import { api } from '$lib/server/http.js';
import * as jobs from '$lib/server/jobs/index.js';
import { inTeam, UUID } from '$lib/server/jobs/access.js';

/** POST /api/calibrations/[id]/cancel — stop a queued or running calibration. */
export const POST = api(async (event) => {
	const id = event.params.id!;
	const job = UUID.test(id) ? await jobs.get(id) : null;
	await inTeam(event, job?.teamId, 'edit', 'calibration job');
	return json({ job: await jobs.view(await jobs.cancel(job!)) });
});
