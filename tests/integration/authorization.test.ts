/**
 * The authorization table: every route of the app, for every kind of caller, and the status each must get.
 * A route added to src/routes must be added here too (the last test fails otherwise).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readdirSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import { client, signIn } from '../helpers/session.js';
import { addMember, closeDb, makeProject, makeTeam, makeUser } from '../helpers/factories.js';
import { calibrationFixtures } from '../helpers/plans.js';
import { examplePlan, planningFixtures } from '../helpers/planning.js';

type Caller = 'signedOut' | 'viewer' | 'editor' | 'admin' | 'owner' | 'outsider';
const callers: Caller[] = ['signedOut', 'viewer', 'editor', 'admin', 'owner', 'outsider'];

interface Ctx {
	teamId: string;
	projectId: string;
	/** a fresh project for cases that delete or rename */
	freshProject: () => Promise<string>;
}

interface Case {
	route: string; // the src/routes pattern this case covers
	method: 'GET' | 'POST' | 'PATCH' | 'DELETE';
	path: (c: Ctx) => string | Promise<string>;
	body?: (c: Ctx) => unknown | Promise<unknown>;
	form?: (c: Ctx) => Record<string, string>;
	expect: Record<Caller, number>;
}

// 303 = sent to sign-in (pages); 401 = API without a session; 404 = not a member (existence hidden).
const page = (member: number, outsider = 404) => ({ signedOut: 303, viewer: member, editor: member, admin: member, owner: member, outsider });

let n = 0;
const cases: Case[] = [
	{ route: '/', method: 'GET', path: () => '/', expect: { signedOut: 303, viewer: 303, editor: 303, admin: 303, owner: 303, outsider: 303 } },
	{ route: '/signin', method: 'GET', path: () => '/signin', expect: { signedOut: 200, viewer: 303, editor: 303, admin: 303, owner: 303, outsider: 303 } },
	{ route: '/signin/check-email', method: 'GET', path: () => '/signin/check-email', expect: { signedOut: 200, viewer: 200, editor: 200, admin: 200, owner: 200, outsider: 200 } },
	{ route: '/signin/problem', method: 'GET', path: () => '/signin/problem?error=Verification', expect: { signedOut: 200, viewer: 200, editor: 200, admin: 200, owner: 200, outsider: 200 } },
	{ route: '/signout', method: 'GET', path: () => '/signout', expect: { signedOut: 303, viewer: 303, editor: 303, admin: 303, owner: 303, outsider: 303 } },
	{ route: '/teams/[teamId]/projects', method: 'GET', path: (c) => `/teams/${c.teamId}/projects`, expect: page(200) },
	{
		route: '/teams/[teamId]/projects',
		method: 'POST',
		path: (c) => `/teams/${c.teamId}/projects?/create`,
		form: () => ({ name: `form project ${n++}`, description: '' }),
		// form actions answer 200 with an error payload; SvelteKit maps thrown errors to their status
		expect: { signedOut: 303, viewer: 403, editor: 200, admin: 200, owner: 200, outsider: 404 }
	},
	{ route: '/teams/[teamId]/projects/[projectId]', method: 'GET', path: (c) => `/teams/${c.teamId}/projects/${c.projectId}`, expect: page(200) },
	{ route: '/api/teams', method: 'GET', path: () => '/api/teams', expect: { signedOut: 401, viewer: 200, editor: 200, admin: 200, owner: 200, outsider: 200 } },
	{ route: '/api/projects', method: 'GET', path: (c) => `/api/projects?teamId=${c.teamId}`, expect: { signedOut: 401, viewer: 200, editor: 200, admin: 200, owner: 200, outsider: 404 } },
	{
		route: '/api/projects',
		method: 'POST',
		path: () => '/api/projects',
		body: (c) => ({ teamId: c.teamId, name: `api project ${n++}` }),
		expect: { signedOut: 401, viewer: 403, editor: 201, admin: 201, owner: 201, outsider: 404 }
	},
	{ route: '/api/projects/[id]', method: 'GET', path: (c) => `/api/projects/${c.projectId}`, expect: { signedOut: 401, viewer: 200, editor: 200, admin: 200, owner: 200, outsider: 404 } },
	{
		route: '/api/projects/[id]',
		method: 'PATCH',
		path: async (c) => `/api/projects/${await c.freshProject()}`,
		body: () => ({ description: 'changed' }),
		expect: { signedOut: 401, viewer: 403, editor: 200, admin: 200, owner: 200, outsider: 404 }
	},
	{
		route: '/api/projects/[id]',
		method: 'DELETE',
		path: async (c) => `/api/projects/${await c.freshProject()}`,
		expect: { signedOut: 401, viewer: 403, editor: 403, admin: 204, owner: 204, outsider: 404 }
	},
	// --- planning workspace ---
	...(() => {
		const fx = planningFixtures();
		const api = (member: number) => ({ signedOut: 401, viewer: member, editor: member, admin: member, owner: member, outsider: 404 });
		const write = (member: number) => ({ ...api(member), viewer: 403 });
		const editPage = { signedOut: 303, viewer: 403, editor: 200, admin: 200, owner: 200, outsider: 404 };
		// an empty superforms post is invalid: members who may edit get past the guard to a 400
		const emptyForm = () => ({ __superform_id: 'x' });
		const editForm = { signedOut: 303, viewer: 403, editor: 400, admin: 400, owner: 400, outsider: 404 };
		const ids = (c: Ctx) => fx.get(c.teamId, c.projectId);
		return [
			{ route: '/teams/[teamId]/plans/new', method: 'GET', path: (c) => `/teams/${c.teamId}/plans/new?project=${c.projectId}`, expect: editPage },
			{ route: '/teams/[teamId]/plans/new', method: 'POST', path: (c) => `/teams/${c.teamId}/plans/new?project=${c.projectId}&/save`, form: emptyForm, expect: editForm },
			{ route: '/teams/[teamId]/plans/[planId]', method: 'GET', path: async (c) => `/teams/${c.teamId}/plans/${(await ids(c)).planIds[0]}`, expect: page(200) },
			{ route: '/teams/[teamId]/plans/[planId]', method: 'POST', path: async (c) => `/teams/${c.teamId}/plans/${(await ids(c)).planIds[0]}?/save`, form: emptyForm, expect: editForm },
			{ route: '/teams/[teamId]/compare', method: 'GET', path: async (c) => `/teams/${c.teamId}/compare?plans=${(await ids(c)).planIds.join(',')}`, expect: page(200) },
			{ route: '/teams/[teamId]/compare/[comparisonId]', method: 'GET', path: async (c) => `/teams/${c.teamId}/compare/${(await ids(c)).comparisonId}`, expect: page(200) },
			{ route: '/teams/[teamId]/machines', method: 'GET', path: (c) => `/teams/${c.teamId}/machines`, expect: page(200) },
			{ route: '/api/estimate', method: 'POST', path: () => '/api/estimate', body: (c) => ({ plan: examplePlan(), teamId: c.teamId }), expect: api(200) },
			{ route: '/api/plans', method: 'GET', path: (c) => `/api/plans?projectId=${c.projectId}`, expect: api(200) },
			{ route: '/api/plans', method: 'POST', path: () => '/api/plans', body: (c) => ({ projectId: c.projectId, name: `api plan ${n++}`, plan: examplePlan() }), expect: write(201) },
			{ route: '/api/plans/[id]', method: 'GET', path: async (c) => `/api/plans/${(await ids(c)).planIds[0]}`, expect: api(200) },
			{ route: '/api/plans/[id]', method: 'PATCH', path: async (c) => `/api/plans/${await fx.freshPlan(c.teamId, c.projectId)}`, body: () => ({ name: `renamed plan ${n++}` }), expect: write(200) },
			{ route: '/api/plans/[id]', method: 'DELETE', path: async (c) => `/api/plans/${await fx.freshPlan(c.teamId, c.projectId)}`, expect: write(204) },
			{ route: '/api/machines', method: 'GET', path: (c) => `/api/machines?teamId=${c.teamId}`, expect: api(200) },
			{
				route: '/api/machines',
				method: 'POST',
				path: () => '/api/machines',
				body: (c) => ({ teamId: c.teamId, name: `rack box ${n++}`, profile: { ramGiB: 128, diskMBps: 900, diskInterface: 'gbe10', cores: 16, coreSpeed: 1 } }),
				expect: write(201)
			},
			{ route: '/api/machines/[id]', method: 'GET', path: async (c) => `/api/machines/${(await ids(c)).machineId}`, expect: api(200) },
			{ route: '/api/machines/[id]', method: 'PATCH', path: async (c) => `/api/machines/${(await ids(c)).machineId}`, body: () => ({ retired: false }), expect: write(200) },
			{ route: '/api/comparisons', method: 'GET', path: (c) => `/api/comparisons?teamId=${c.teamId}`, expect: api(200) },
			// comparing is a viewer's job too, so viewers may save one
			{ route: '/api/comparisons', method: 'POST', path: () => '/api/comparisons', body: async (c) => ({ teamId: c.teamId, name: `cmp ${n++}`, planIds: (await ids(c)).planIds }), expect: api(201) },
			{ route: '/api/comparisons/[id]', method: 'GET', path: async (c) => `/api/comparisons/${(await ids(c)).comparisonId}`, expect: api(200) },
			{
				route: '/api/comparisons/[id]',
				method: 'DELETE',
				path: async (c) => `/api/comparisons/${await fx.freshComparison(c.teamId, (await ids(c)).planIds)}`,
				expect: { signedOut: 401, viewer: 403, editor: 403, admin: 204, owner: 204, outsider: 404 }
			}
		] satisfies Case[];
	})(),
	// --- end planning workspace ---
	// --- calibration jobs and uploads ---
	...(() => {
		const cal = calibrationFixtures();
		// API routes: 401 signed out, the member status, 404 for another team's member
		const api = (member: number) => ({ signedOut: 401, viewer: member, editor: member, admin: member, owner: member, outsider: 404 });
		return [
			{ route: '/api/plans/[id]/calibrate', method: 'GET', path: async (c) => `/api/plans/${(await cal.get(c.teamId, c.projectId)).planId}/calibrate`, expect: api(200) },
			// the saved plan is invalid, so members who pass the guard get 400 and no calibration is queued
			{ route: '/api/plans/[id]/calibrate', method: 'POST', path: async (c) => `/api/plans/${(await cal.get(c.teamId, c.projectId)).brokenPlanId}/calibrate`, body: () => ({}), expect: { ...api(400), viewer: 403 } },
			{ route: '/api/calibrations/[id]', method: 'GET', path: async (c) => `/api/calibrations/${(await cal.get(c.teamId, c.projectId)).doneJobId}`, expect: api(200) },
			{ route: '/api/calibrations/[id]/cancel', method: 'POST', path: async (c) => `/api/calibrations/${await cal.queuedJob(c.teamId)}/cancel`, expect: { ...api(200), viewer: 403 } },
			{ route: '/api/calibrations/[id]/retry', method: 'POST', path: async (c) => `/api/calibrations/${await cal.failedJob(c.teamId)}/retry`, expect: { ...api(202), viewer: 403 } },
			{ route: '/api/uploads', method: 'GET', path: (c) => `/api/uploads?teamId=${c.teamId}`, expect: api(200) },
			{ route: '/api/uploads', method: 'POST', path: (c) => `/api/uploads?teamId=${c.teamId}&fileName=rows.svm&kind=svmlight`, body: () => '+1 3:1', expect: { ...api(202), viewer: 403 } },
			{ route: '/api/uploads/[id]', method: 'GET', path: async (c) => `/api/uploads/${(await cal.get(c.teamId, c.projectId)).uploadId}`, expect: api(200) },
			{ route: '/teams/[teamId]/uploads', method: 'GET', path: (c) => `/teams/${c.teamId}/uploads`, expect: page(200) },
			{ route: '/teams/[teamId]/uploads/[uploadId]', method: 'GET', path: async (c) => `/teams/${c.teamId}/uploads/${(await cal.get(c.teamId, c.projectId)).uploadId}`, expect: page(200) },
		] satisfies Case[];
	})(),
	// --- end calibration jobs and uploads ---
	// --- teams that pay ---
	{ route: '/pricing', method: 'GET', path: () => '/pricing', expect: { signedOut: 200, viewer: 200, editor: 200, admin: 200, owner: 200, outsider: 200 } },
	{ route: '/settings', method: 'GET', path: () => '/settings', expect: { signedOut: 303, viewer: 200, editor: 200, admin: 200, owner: 200, outsider: 200 } },
	{
		route: '/settings',
		method: 'POST',
		path: () => '/settings?/save',
		form: () => ({ calibrationMail: 'on' }),
		expect: { signedOut: 303, viewer: 200, editor: 200, admin: 200, owner: 200, outsider: 200 }
	},
	{ route: '/teams/[teamId]/billing', method: 'GET', path: (c) => `/teams/${c.teamId}/billing`, expect: page(200) },
	{
		// runs before the invite case: the owner's subscription lifts the Free member limit the invitations below would reach
		route: '/teams/[teamId]/billing',
		method: 'POST',
		path: (c) => `/teams/${c.teamId}/billing?/subscribe`,
		form: () => ({ cardToken: 'tok_visa' }),
		expect: { signedOut: 303, viewer: 403, editor: 403, admin: 403, owner: 200, outsider: 404 }
	},
	{ route: '/teams/[teamId]/members', method: 'GET', path: (c) => `/teams/${c.teamId}/members`, expect: page(200) },
	{
		route: '/teams/[teamId]/members',
		method: 'POST',
		path: (c) => `/teams/${c.teamId}/members?/invite`,
		form: () => ({ email: `invitee-${Date.now()}-${n++}@example.org`, role: 'viewer' }),
		expect: { signedOut: 303, viewer: 403, editor: 403, admin: 200, owner: 200, outsider: 404 }
	},
	// an unknown invitation token: a clear page for anyone, and accepting it needs a session first
	{ route: '/invite/[token]', method: 'GET', path: () => '/invite/no-such-token', expect: { signedOut: 200, viewer: 200, editor: 200, admin: 200, owner: 200, outsider: 200 } },
	{ route: '/invite/[token]', method: 'POST', path: () => '/invite/no-such-token?/accept', form: () => ({}), expect: { signedOut: 303, viewer: 404, editor: 404, admin: 404, owner: 404, outsider: 404 } },
	// Stripe authenticates by signature, not session: unsigned calls are refused for every caller
	{ route: '/api/billing/webhook', method: 'POST', path: () => '/api/billing/webhook', body: () => ({ id: 'evt_unsigned' }), expect: { signedOut: 400, viewer: 400, editor: 400, admin: 400, owner: 400, outsider: 400 } }
	// --- end teams that pay ---
];

const cookies = {} as Record<Caller, string | null>;
let ctx: Ctx;

beforeAll(async () => {
	const team = await makeTeam();
	const other = await makeTeam();
	ctx = { teamId: team.id, projectId: (await makeProject(team.id)).id, freshProject: async () => (await makeProject(team.id)).id };
	cookies.signedOut = null;
	for (const role of ['viewer', 'editor', 'admin', 'owner'] as const) {
		const u = await makeUser(role);
		await addMember(team.id, u.id, role);
		cookies[role] = await signIn(u.email!);
	}
	const outsider = await makeUser('outsider');
	await addMember(other.id, outsider.id, 'owner');
	cookies.outsider = await signIn(outsider.email!);
});

afterAll(closeDb);

describe('authorization table', () => {
	for (const c of cases) {
		for (const who of callers) {
			it(`${c.method} ${c.route} as ${who} → ${c.expect[who]}`, async () => {
				const call = client(cookies[who]);
				const path = await c.path(ctx);
				const res = c.form
					? await call(path, { method: 'POST', body: new URLSearchParams(c.form(ctx)), headers: { 'content-type': 'application/x-www-form-urlencoded', 'x-sveltekit-action': 'true', accept: 'application/json' } })
					: await call(path, { method: c.method, json: await c.body?.(ctx) });
				let status = res.status;
				// a form action called as use:enhance does reports redirects and failures inside a JSON envelope
				if (c.form) {
					const envelope = (await res.json()) as { type: string; status?: number; location?: string };
					if (envelope.type === 'redirect') status = 303;
					else if (envelope.type === 'failure') status = envelope.status!;
					else if (envelope.type === 'success') status = 200;
				}
				expect(status).toBe(c.expect[who]);
			});
		}
	}

	it('sends signed-out visitors of app pages to sign-in, coming back afterwards', async () => {
		const res = await client(null)(`/teams/${ctx.teamId}/projects`);
		expect(res.status).toBe(303);
		expect(res.headers.get('location')).toBe(`/signin?redirectTo=${encodeURIComponent(`/teams/${ctx.teamId}/projects`)}`);
	});

	it('cross-team ids answer 404, never 403, so existence does not leak', async () => {
		const res = await client(cookies.outsider)(`/api/projects/${ctx.projectId}`, { method: 'DELETE' });
		expect(res.status).toBe(404);
		expect((await res.json()).error.code).toBe('not_found');
	});

	it('covers every route under src/routes', () => {
		const root = join(process.cwd(), 'src/routes');
		const found: string[] = [];
		const walk = (dir: string) => {
			for (const name of readdirSync(dir)) {
				const p = join(dir, name);
				if (statSync(p).isDirectory()) walk(p);
				else if (/^\+(page|server)\.(svelte|ts)$/.test(name)) {
					const route = '/' + relative(root, dir).split('/').filter((s) => s && !/^\(.*\)$/.test(s)).join('/');
					if (!found.includes(route)) found.push(route);
				}
			}
		};
		walk(root);
		const covered = new Set(cases.map((c) => c.route));
		expect(found.filter((r) => !covered.has(r))).toEqual([]);
	});
});
