import { json } from '@sveltejs/kit';
import { api } from '$lib/server/http.js';
import * as uploads from '$lib/server/uploads/index.js';
import { inTeam, UUID } from '$lib/server/jobs/access.js';

/** GET /api/uploads/[id] — a sample: status, profile, first malformed lines, and the dataset fields for a plan once ready. */
export const GET = api(async (event) => {
	const id = event.params.id!;
	const row = UUID.test(id) ? await uploads.get(id) : null;
	await inTeam(event, row?.teamId, 'read', 'upload');
	return json({ upload: uploads.view(row!) });
});
