/**
 * Plan: one saved question — a dataset profile, a machine profile and a training setup.
 * Plain top-level schemas without transforms so forms (superforms zod4 adapter), the API
 * and the CLI share them. Every bound's message names the field.
 */
import { z } from 'zod';
import { machineSchema, numberField } from './machine.js';

export const LOSSES = ['hinge', 'sqhinge', 'logistic'] as const;
export const VALUE_KINDS = ['binary', 'real'] as const;
export const FORMATS = ['text', 'binary'] as const;

const wholeNumber = (field: string, min: number) =>
	numberField(field).int(`${field} must be a whole number`).min(min, `${field} must be at least ${min}`);

export const datasetSchema = z
	.strictObject({
		rows: wholeNumber('dataset.rows', 1).max(1e13, 'dataset.rows must be at most 1e13'),
		features: wholeNumber('dataset.features', 1).max(2 ** 32, 'dataset.features must be at most 4294967296'),
		nnzPerRow: numberField('dataset.nnzPerRow').gt(0, 'dataset.nnzPerRow must be greater than 0'),
		positiveFraction: numberField('dataset.positiveFraction')
			.gt(0, 'dataset.positiveFraction must be greater than 0')
			.lt(1, 'dataset.positiveFraction must be less than 1'),
		valueKind: z.enum(VALUE_KINDS, { error: 'dataset.valueKind must be one of binary, real' }),
		format: z.enum(FORMATS, { error: 'dataset.format must be one of text, binary' }),
		compressed: z.boolean({ error: 'dataset.compressed must be true or false' }),
		/** bytes of the dataset as stored; derived from the format when absent */
		bytesOnDisk: numberField('dataset.bytesOnDisk').int('dataset.bytesOnDisk must be a whole number').min(1, 'dataset.bytesOnDisk must be at least 1').optional()
	})
	.superRefine((d, ctx) => {
		if (d.nnzPerRow > d.features) ctx.addIssue({ code: 'custom', path: ['nnzPerRow'], message: 'dataset.nnzPerRow must be at most dataset.features' });
	});

export const trainingSchema = z.strictObject({
	loss: z.enum(LOSSES, { error: 'training.loss must be one of hinge, sqhinge, logistic' }),
	C: numberField('training.C').gt(0, 'training.C must be greater than 0').max(1e6, 'training.C must be at most 1000000'),
	/** relative duality gap to stop at */
	tol: numberField('training.tol').gt(0, 'training.tol must be greater than 0').lt(1, 'training.tol must be less than 1'),
	/** C values in a sweep; 1 for a single job */
	cValues: wholeNumber('training.cValues', 1).max(1000, 'training.cValues must be at most 1000'),
	/** cross-validation folds per C value; 1 for no cross-validation */
	folds: wholeNumber('training.folds', 1).max(100, 'training.folds must be at most 100')
});

export const planSchema = z.strictObject({
	name: z.string({ error: 'name must be text' }).max(200, 'name must be at most 200 characters').optional(),
	dataset: datasetSchema,
	machine: machineSchema,
	training: trainingSchema,
	deadlineHours: numberField('deadlineHours').gt(0, 'deadlineHours must be greater than 0').max(8760, 'deadlineHours must be at most 8760 (a year)').optional()
});

export type Dataset = z.infer<typeof datasetSchema>;
export type Training = z.infer<typeof trainingSchema>;
export type Plan = z.infer<typeof planSchema>;
export type { Machine } from './machine.js';

export interface FieldError {
	/** dotted path of the field, e.g. "dataset.nnzPerRow" ("" for the whole plan) */
	path: string;
	message: string;
}

export type ParseResult<T> = { ok: true; plan: T } | { ok: false; errors: FieldError[] };

/** Turn zod issues into messages that name the field, also for unknown keys and missing sections. */
export function fieldErrors(issues: z.core.$ZodIssue[]): FieldError[] {
	return issues.map((iss) => {
		const path = iss.path.map(String).join('.');
		if (iss.code === 'unrecognized_keys') {
			const names = iss.keys.map((k) => (path ? `${path}.${k}` : k));
			return { path, message: `${names.join(', ')} ${names.length > 1 ? 'are not plan fields' : 'is not a plan field'}` };
		}
		if (iss.code === 'invalid_type' && iss.expected === 'object') {
			const field = path || 'plan';
			return { path, message: iss.input === undefined ? `${field} is required` : `${field} must be an object` };
		}
		return { path, message: iss.message };
	});
}

/** Validate a plan given as parsed JSON (or a JSON string). */
export function parsePlan(json: unknown): ParseResult<Plan> {
	let input = json;
	if (typeof json === 'string') {
		try {
			input = JSON.parse(json);
		} catch (err) {
			return { ok: false, errors: [{ path: '', message: `plan is not valid JSON: ${err instanceof Error ? err.message : String(err)}` }] };
		}
	}
	const r = planSchema.safeParse(input, { reportInput: true });
	return r.success ? { ok: true, plan: r.data } : { ok: false, errors: fieldErrors(r.error.issues) };
}
