import { json } from '@sveltejs/kit';
import { api } from '$lib/server/http.js';
import * as jobs from '$lib/server/jobs/index.js';
import { inTeam, UUID } from '$lib/server/jobs/access.js';

/** GET /api/calibrations/[id] — a calibration job: status, phase, fraction, error, and the record once done. */
export const GET = api(async (event) => {
	const id = event.params.id!;
	const job = UUID.test(id) ? await jobs.get(id) : null;
	await inTeam(event, job?.teamId, 'read', 'calibration job');
	return json({ job: await jobs.view(job!, true) });
});
