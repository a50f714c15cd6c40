/** Project input, shared by the forms, the JSON API and tests. */
import { z } from 'zod';

export const projectName = z
	.string({ error: 'Name is required.' })
	.trim()
	.min(1, 'Name is required.')
	.max(80, 'Name must be at most 80 characters.');

export const projectDescription = z.string({ error: 'Description must be text.' }).trim().max(2000, 'Description must be at most 2000 characters.');

export const projectCreate = z.object({
	name: projectName,
	description: projectDescription.default('')
});

export const projectCreateApi = projectCreate.extend({
	teamId: z.uuid({ error: 'teamId must be a team id (UUID).' })
});

export const projectUpdate = z
	.object({ name: projectName.optional(), description: projectDescription.optional() })
	.refine((v) => v.name !== undefined || v.description !== undefined, { message: 'Give a name or a description to change.' });

export type ProjectCreate = z.infer<typeof projectCreate>;
export type ProjectUpdate = z.infer<typeof projectUpdate>;
