import { json } from '@sveltejs/kit';
import { api, ApiError } from '$lib/server/http.js';
import * as guard from '$lib/server/guard.js';
import * as comparisons from '$lib/server/comparisons.js';

/** GET /api/comparisons/[id] — the saved comparison with its side-by-side table. */
export const GET = api(async (event) => {
	const { comparison, team } = await guard.comparison(event, event.params.id!, 'read');
	return json({ comparison, table: await comparisons.table(team.id, comparison.planIds) });
});

/** DELETE /api/comparisons/[id] — by its author, or an admin. */
export const DELETE = api(async (event) => {
	const { comparison, team, user, role } = await guard.comparison(event, event.params.id!, 'read');
	if (comparison.createdBy !== user.id && !guard.allows(role, 'manage')) throw new ApiError(403, 'forbidden', 'Only its author or an admin can delete a comparison.');
	await comparisons.remove(comparison.id, team.id);
	return new Response(null, { status: 204 });
});
