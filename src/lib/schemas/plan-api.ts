/** Plan requests of the web app and the API, around the plan schema itself (PLAN.json). */
import { z } from 'zod';
import { planSchema } from './plan.js';

const uuid = (field: string) => z.uuid({ error: `${field} must be an id (UUID)` });

export const planName = z.string({ error: 'name is required' }).trim().min(1, 'name is required').max(200, 'name must be at most 200 characters');

export const estimateRequest = z.object({
	plan: planSchema,
	teamId: uuid('teamId').optional(),
	calibrationId: z.string().max(64).optional(),
	/** the RAM and disk what-if curves (true when absent); the editor asks only when a field they depend on changed */
	whatIf: z.boolean({ error: 'whatIf must be true or false' }).optional()
});

/** Create a plan, or import a PLAN.json (name taken from the plan when absent). */
export const planCreate = z.object({ projectId: uuid('projectId'), name: planName.optional(), plan: planSchema, calibrationId: z.string().max(64).optional() });

/** Duplicate a saved plan (POST /api/plans with duplicateOf). */
export const planDuplicate = z.object({ duplicateOf: uuid('duplicateOf'), name: planName.optional() });

export const planUpdate = z
	.object({ name: planName.optional(), plan: planSchema.optional(), calibrationId: z.string().max(64).nullable().optional() })
	.refine((v) => v.name !== undefined || v.plan !== undefined || v.calibrationId !== undefined, { message: 'give a name, a plan or a calibrationId to change' });

export const PLAN_SORTS = ['name', 'recommended', 'p50', 'range', 'cost', 'verdict', 'author', 'updated'] as const;
export const VERDICTS = ['meets', 'at risk', 'misses', 'none'] as const;

export const planListQuery = z.object({
	sort: z.enum(PLAN_SORTS, { error: `sort must be one of ${PLAN_SORTS.join(', ')}` }).default('updated'),
	dir: z.enum(['asc', 'desc'], { error: 'dir must be asc or desc' }).default('desc'),
	q: z.string().max(200, 'q must be at most 200 characters').default(''),
	recommended: z.enum(['memory', 'block', 'selective', 'stream', 'none', ''], { error: 'recommended must be a strategy name' }).default(''),
	verdict: z.enum([...VERDICTS, ''], { error: 'verdict must be one of meets, at risk, misses, none' }).default(''),
	page: z.coerce.number({ error: 'page must be a number' }).int('page must be a whole number').min(1, 'page must be at least 1').default(1),
	pageSize: z.coerce.number({ error: 'pageSize must be a number' }).int('pageSize must be a whole number').min(1, 'pageSize must be at least 1').max(200, 'pageSize must be at most 200').default(25)
});

export type PlanListQuery = z.infer<typeof planListQuery>;

/** The plan editor's form: the plan schema with a required name. */
export const planEditorSchema = planSchema.extend({ name: planName });
export type PlanEditor = z.infer<typeof planEditorSchema>;
