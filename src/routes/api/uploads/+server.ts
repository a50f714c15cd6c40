import { json } from '@sveltejs/kit';
import { api, ApiError, fieldErrors } from '$lib/server/http.js';
import * as guard from '$lib/server/guard.js';
import * as uploads from '$lib/server/uploads/index.js';
import { uploadParams } from '$lib/schemas/upload.js';
import { discard } from '$lib/server/uploads/receive.js';

/** GET /api/uploads?teamId=… — the team's samples and the upload limit. */
export const GET = api(async (event) => {
	const teamId = event.url.searchParams.get('teamId');
	if (!teamId) throw new ApiError(400, 'invalid', 'Query parameter teamId is required.', { teamId: 'Required.' });
	const { team } = await guard.team(event, teamId, 'read');
	return json({ uploads: await uploads.list(team.id), limitBytes: uploads.limitBytes() });
});

/** POST /api/uploads?teamId=…&fileName=…&kind=svmlight|csv[&labelColumn=…] — the file itself is the body (gzip or plain). */
export const POST = api(async (event) => {
	try {
		await guard.user(event);
		const parsed = uploadParams.safeParse(Object.fromEntries(event.url.searchParams));
		if (!parsed.success) {
			const fields = fieldErrors(parsed.error);
			throw new ApiError(400, 'invalid', `Invalid ${Object.keys(fields).join(', ')}: ${Object.values(fields)[0]}`, fields);
		}
		const { team, user } = await guard.team(event, parsed.data.teamId, 'edit');
		const row = await uploads.create(team.id, user.id, parsed.data, event.request);
		return json({ upload: uploads.view(row) }, { status: 202 });
	} catch (e) {
		// refused before the body was read: take it in (bounded) so the client sees the answer, not a reset
		await discard(event.request.body, 2 ** 20);
		throw e;
	}
});
