/** The team machine catalog: a named machine profile, entered by hand or uploaded from `loadline probe-machine --json`. */
import { z } from 'zod';
import { machineProbeSchema, machineSchema } from './machine.js';

export const machineName = z.string({ error: 'name is required' }).trim().min(1, 'name is required').max(120, 'name must be at most 120 characters');

/** Exactly one of `profile` (entered) or `probe` (measured) is given. */
export const machineCreate = z
	.object({ teamId: z.uuid({ error: 'teamId must be an id (UUID)' }), name: machineName, profile: machineSchema.optional(), probe: machineProbeSchema.optional() })
	.refine((v) => (v.profile === undefined) !== (v.probe === undefined), { message: 'give either profile or probe (the output of loadline probe-machine --json)', path: ['profile'] });

export const machineUpdate = z
	.object({ name: machineName.optional(), profile: machineSchema.optional(), retired: z.boolean({ error: 'retired must be true or false' }).optional() })
	.refine((v) => v.name !== undefined || v.profile !== undefined || v.retired !== undefined, { message: 'give a name, a profile or retired to change' });
