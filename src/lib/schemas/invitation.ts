/** Invitation and member-role input, shared by the members page and tests. */
import { z } from 'zod';

export const roles = ['owner', 'admin', 'editor', 'viewer'] as const;

export const role = z.enum(roles, { error: 'Role must be owner, admin, editor or viewer.' });

export const inviteForm = z.object({
	email: z
		.string({ error: 'E-mail address is required.' })
		.trim()
		.toLowerCase()
		.pipe(z.email({ error: 'Enter a valid e-mail address, like ana@example.org.' }).max(254, 'E-mail address is too long.')),
	role
});

export const roleForm = z.object({ userId: z.string().min(1, 'userId is required.'), role });

export type InviteInput = z.infer<typeof inviteForm>;
