import { fail, redirect, type RequestEvent } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import * as guard from '$lib/server/guard.js';
import * as members from '$lib/server/members.js';
import * as invitations from '$lib/server/invitations.js';
import * as limits from '$lib/server/billing/limits.js';
import { ApiError } from '$lib/server/http.js';
import { inviteForm, roleForm } from '$lib/schemas/invitation.js';

export const load = (async (event) => {
	const { team, role, user } = await guard.team(event, event.params.teamId, 'read');
	const canManage = guard.allows(role, 'manage');
	return {
		team,
		me: user.id,
		members: await members.list(team.id),
		invitations: canManage ? await invitations.listOpen(team.id) : [],
		canManage,
		isOwner: role === 'owner',
		memberLimit: await limits.check(team.id, 'members'),
		inviteHours: invitations.INVITE_HOURS
	};
}) satisfies PageServerLoad;

/** Run a member action; refusals from the server modules come back as the page's message. */
async function attempt(action: string, work: () => Promise<string>, values?: Record<string, string>) {
	try {
		return { action, notice: await work() };
	} catch (e) {
		if (e instanceof ApiError) return fail(e.status, { action, error: e.message, fields: e.fields, values });
		throw e;
	}
}

const field = async (event: RequestEvent, name: string) => String((await event.request.formData()).get(name) ?? '');

export const actions = {
	invite: async (event) => {
		const { team, user, role } = await guard.team(event, event.params.teamId, 'manage');
		const raw = Object.fromEntries(await event.request.formData());
		const values = { email: String(raw.email ?? ''), role: String(raw.role ?? '') };
		const parsed = inviteForm.safeParse(raw);
		if (!parsed.success) {
			const issue = parsed.error.issues[0];
			return fail(400, { action: 'invite', error: issue.message, fields: { [String(issue.path[0] ?? 'email')]: issue.message }, values });
		}
		return attempt(
			'invite',
			async () => {
				await invitations.create(team.id, { ...user, role }, parsed.data, event.url.origin);
				return `Invitation sent to ${parsed.data.email} as ${parsed.data.role}. The link expires in ${invitations.INVITE_HOURS} hours.`;
			},
			values
		);
	},
	resend: async (event) => {
		const { team, user, role } = await guard.team(event, event.params.teamId, 'manage');
		const id = await field(event, 'invitationId');
		return attempt('resend', async () => {
			await invitations.resend(team.id, id, { ...user, role }, event.url.origin);
			return `A new link was sent; the old one no longer works. It expires in ${invitations.INVITE_HOURS} hours.`;
		});
	},
	revoke: async (event) => {
		const { team } = await guard.team(event, event.params.teamId, 'manage');
		const id = await field(event, 'invitationId');
		return attempt('revoke', async () => {
			await invitations.revoke(team.id, id);
			return 'Invitation revoked; its link no longer works.';
		});
	},
	role: async (event) => {
		const { team, user, role } = await guard.team(event, event.params.teamId, 'manage');
		const parsed = roleForm.safeParse(Object.fromEntries(await event.request.formData()));
		if (!parsed.success) return fail(400, { action: 'role', error: parsed.error.issues[0].message });
		return attempt('role', async () => {
			await members.changeRole(team.id, { id: user.id, role }, parsed.data.userId, parsed.data.role);
			return `Role changed to ${parsed.data.role}.`;
		});
	},
	remove: async (event) => {
		const { team, user, role } = await guard.team(event, event.params.teamId, 'manage');
		const userId = await field(event, 'userId');
		return attempt('remove', async () => {
			await members.remove(team.id, { id: user.id, role }, userId);
			return 'Member removed.';
		});
	},
	leave: async (event) => {
		const { team, user, role } = await guard.team(event, event.params.teamId, 'read');
		const refused = await attempt('leave', async () => {
			await members.remove(team.id, { id: user.id, role }, user.id);
			return '';
		});
		// A former member cannot see this page any more.
		if ('notice' in refused) redirect(303, '/');
		return refused;
	}
} satisfies Actions;
