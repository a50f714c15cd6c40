import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { api, ApiError } from '$lib/server/http.js';
import * as jobs from '$lib/server/jobs/index.js';
import * as uploads from '$lib/server/uploads/index.js';
import { inTeam, UUID } from '$lib/server/jobs/access.js';
import { parsePlan } from '$lib/schemas/plan.js';

const options = z.strictObject({
	force: z.boolean({ error: 'force must be true or false' }).optional(),
	uploadId: z.uuid({ error: 'uploadId must be the id of one of the team\'s uploaded samples' }).optional()
});

/** GET /api/plans/[id]/calibrate — the plan's newest calibration job (null when it has none), so a page can pick up a running one. */
export const GET = api(async (event) => {
	const id = event.params.id!;
	const plan = UUID.test(id) ? await jobs.planFor(id) : null;
	await inTeam(event, plan?.teamId, 'read', 'plan');
	const job = await jobs.latestForPlan(plan!.id);
	return json({ job: job ? await jobs.view(job) : null });
});

/** POST /api/plans/[id]/calibrate { force?, uploadId? } — queue a calibration for the plan (on synthetic data, or on the team's parsed sample uploadId), or reuse a fresh one of the same shape and data. */
export const POST = api(async (event) => {
	const id = event.params.id!;
	const plan = UUID.test(id) ? await jobs.planFor(id) : null;
	const { team, user } = await inTeam(event, plan?.teamId, 'edit', 'plan');
	const text = await event.request.text();
	let raw: unknown = {};
	try {
		if (text.trim()) raw = JSON.parse(text);
	} catch {
		throw new ApiError(400, 'invalid_json', 'The request body is not valid JSON.');
	}
	const opts = options.safeParse(raw);
	if (!opts.success) {
		const issue = opts.error.issues[0];
		const field = issue.path.join('.') || (issue.code === 'unrecognized_keys' ? issue.keys.join(', ') : 'body');
		throw new ApiError(400, 'invalid', `Invalid ${field}: ${issue.code === 'unrecognized_keys' ? 'not an option (the options are force and uploadId)' : issue.message}`, { [field]: issue.message });
	}
	const parsed = parsePlan(plan!.input);
	if (!parsed.ok) {
		const fields = Object.fromEntries(parsed.errors.map((e) => [e.path || 'plan', e.message]));
		throw new ApiError(400, 'invalid_plan', `The saved plan is invalid, so it cannot be calibrated: ${parsed.errors[0].message}`, fields);
	}
	const upload = opts.data.uploadId ? await uploads.forCalibration(team.id, opts.data.uploadId) : undefined;
	const out = await jobs.enqueue({ teamId: team.id, planId: plan!.id, plan: parsed.plan, userId: user.id, force: opts.data.force, upload });
	const message = out.reused
		? `Reused a calibration of the same shape${upload ? ` on the sample ${upload.fileName}` : ''} from ${out.reused.createdAt.toISOString()} (records are reused for ${jobs.REUSE_DAYS} days; send force: true to run a new one).`
		: out.joined
			? 'A calibration of the same shape is already queued or running; this is that job.'
			: upload
				? `Calibration queued, on the uploaded sample ${upload.fileName} (${upload.rows} rows).`
				: 'Calibration queued, on synthetic data shaped like the plan.';
	return json({ job: await jobs.view(out.job), reused: out.reused !== null, joined: out.joined, message }, { status: out.reused || out.joined ? 200 : 202 });
});
