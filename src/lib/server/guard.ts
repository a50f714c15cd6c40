/**
 * The one place that decides who may do what. Every load, action and API route calls it.
 * viewer reads; editor also creates and edits; admin also deletes and manages members;
 * owner also holds billing and may delete the team. A non-member gets 404, never 403,
 * so the existence of another team's resources does not leak.
 */
import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import type { Role } from './db/schema.js';
import * as teams from './teams.js';
import * as projects from './projects.js';
import * as plans from './plans.js';
import * as machines from './machines.js';
import * as comparisons from './comparisons.js';

export type Need = 'read' | 'edit' | 'manage' | 'own';

const roleRank: Record<Role, number> = { viewer: 0, editor: 1, admin: 2, owner: 3 };
const needRank: Record<Need, number> = { read: 0, edit: 1, manage: 2, own: 3 };
const needWords: Record<Need, string> = {
	read: 'read',
	edit: 'create or edit (editor or above)',
	manage: 'delete or manage members (admin or above)',
	own: 'manage billing or delete the team (owner)'
};

export interface SignedInUser {
	id: string;
	email: string;
	name: string | null;
}

export function allows(role: Role, need: Need): boolean {
	return roleRank[role] >= needRank[need];
}

const isApi = (event: RequestEvent) => event.url.pathname.startsWith('/api/');
export const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

// locals.auth() runs a whole Auth.js session request (a database query) on each call: once per request is enough.
const signedIn = new WeakMap<RequestEvent, Promise<SignedInUser>>();

/** The signed-in user; pages redirect to sign-in, API routes answer 401. */
export function user(event: RequestEvent): Promise<SignedInUser> {
	let me = signedIn.get(event);
	if (!me) signedIn.set(event, (me = lookUpUser(event)));
	return me;
}

async function lookUpUser(event: RequestEvent): Promise<SignedInUser> {
	const session = await event.locals.auth();
	const u = session?.user;
	if (!u?.id || !u.email) {
		if (isApi(event)) error(401, { code: 'unauthenticated', message: 'Sign in first.' });
		const back = event.url.pathname + event.url.search;
		redirect(303, `/signin?redirectTo=${encodeURIComponent(back)}`);
	}
	return { id: u.id, email: u.email, name: u.name ?? null };
}

/** The user's membership in a team (given by id, or the team a resource belongs to), checked against what they need. */
export async function inTeam(event: RequestEvent, teamId: string | null | undefined, need: Need, noun = 'team') {
	return memberAs(await user(event), teamId, need, noun);
}

async function memberAs(me: SignedInUser, teamId: string | null | undefined, need: Need, noun: string) {
	const m = teamId && UUID.test(teamId) ? await teams.membership(teamId, me.id) : null;
	if (!m) error(404, { code: 'not_found', message: `No such ${noun}.` });
	if (!allows(m.role, need)) error(403, { code: 'forbidden', message: `Your role (${m.role}) cannot ${needWords[need]} in this team.` });
	return { user: me, team: m, role: m.role };
}

export const team = (event: RequestEvent, teamId: string, need: Need) => inTeam(event, teamId, need);

/** A resource of a team, loaded by id: 404 when missing or in a team the user is not a member of. */
async function owned<R extends { teamId: string }>(event: RequestEvent, id: string, need: Need, noun: string, load: (id: string) => Promise<R | null>) {
	const me = await user(event);
	const row = UUID.test(id) ? await load(id) : null;
	return { ...(await memberAs(me, row?.teamId, need, noun)), row: row! };
}

export async function project(event: RequestEvent, projectId: string, need: Need) {
	const { row, ...rest } = await owned(event, projectId, need, 'project', projects.get);
	return { ...rest, project: row };
}

export async function plan(event: RequestEvent, planId: string, need: Need) {
	const { row, ...rest } = await owned(event, planId, need, 'plan', plans.get);
	return { ...rest, plan: row };
}

export async function machine(event: RequestEvent, machineId: string, need: Need) {
	const { row, ...rest } = await owned(event, machineId, need, 'machine', machines.get);
	return { ...rest, machine: row };
}

/** A saved comparison: only members of its team may open it. */
export async function comparison(event: RequestEvent, comparisonId: string, need: Need) {
	const { row, ...rest } = await owned(event, comparisonId, need, 'comparison', comparisons.get);
	return { ...rest, comparison: row };
}
