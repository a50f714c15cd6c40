/**
 * Machine profile: the hardware a plan is for. Shared by forms, the API and the CLI
 * (`loadline probe-machine --json` prints one). Units are in the field names.
 */
import { z } from 'zod';
import { DISK_INTERFACES, LINE_RATES } from '../engine/model/line-rates.js';

/** A number field whose type errors name the field. */
export const numberField = (field: string) =>
	z.number({ error: (iss) => (iss.input === undefined ? `${field} is required` : `${field} must be a number`) });

export const machineSchema = z
	.strictObject({
		name: z.string({ error: 'machine.name must be text' }).max(120, 'machine.name must be at most 120 characters').optional(),
		ramGiB: numberField('machine.ramGiB').min(1, 'machine.ramGiB must be at least 1').max(1048576, 'machine.ramGiB must be at most 1048576 (1 PiB)'),
		diskMBps: numberField('machine.diskMBps').gt(0, 'machine.diskMBps must be greater than 0'),
		diskInterface: z.enum(DISK_INTERFACES, { error: `machine.diskInterface must be one of ${DISK_INTERFACES.join(', ')}` }),
		cores: numberField('machine.cores').int('machine.cores must be a whole number').min(1, 'machine.cores must be at least 1').max(4096, 'machine.cores must be at most 4096'),
		coreSpeed: numberField('machine.coreSpeed').gt(0, 'machine.coreSpeed must be greater than 0').max(20, 'machine.coreSpeed must be at most 20'),
		pricePerHour: numberField('machine.pricePerHour').min(0, 'machine.pricePerHour must be at least 0').optional()
	})
	.superRefine((m, ctx) => {
		const limit = LINE_RATES[m.diskInterface];
		if (m.diskMBps > limit.maxMBps)
			ctx.addIssue({
				code: 'custom',
				path: ['diskMBps'],
				message: `machine.diskMBps must be at most ${Math.floor(limit.maxMBps)}, the line rate of ${limit.label} (${m.diskInterface})`
			});
	});

export type Machine = z.infer<typeof machineSchema>;

/** What `loadline probe-machine --json` prints: a machine profile plus how it was measured. */
export const machineProbeSchema = z.strictObject({
	kind: z.literal('loadline-machine-probe'),
	machine: machineSchema,
	measured: z.strictObject({
		date: z.string(),
		cpuModel: z.string(),
		node: z.string(),
		platform: z.string(),
		readMBps: z.number(),
		readMethod: z.string(),
		cacheBypassed: z.boolean(),
		readBytes: z.number(),
		interfaceGuessed: z.boolean(),
		/** engine per-nonzero and per-update cost on the reference kernel */
		nsPerNnz: z.number(),
		nsPerUpdate: z.number(),
		kernel: z.string()
	})
});

export type MachineProbe = z.infer<typeof machineProbeSchema>;
