/**
 * Calibration record: which machine a calibration ran on and what it measured.
 * The web app stores it as JSON; the model (model/fit.ts) is fitted on it.
 */
import { z } from 'zod';
import { planSchema } from '../../schemas/plan.js';

export const STRATEGIES = ['memory', 'block', 'selective', 'stream'] as const;

/** One engine run on synthetic data, with the emulation it ran under. */
export const calibrationRunSchema = z.object({
	strategy: z.enum(STRATEGIES),
	rows: z.number().int().positive(),
	/** feature dimension of this run's data when it is not the record's (calibrations of 2026-12-03 08:15–09:30 ran on smaller weight vectors) */
	features: z.number().int().positive().optional(),
	/** distinct features the run's rows draw from, spread over the record's feature dimension (synthetic sets keep the plan's rows per feature); absent: all of them */
	featuresUsed: z.number().int().positive().optional(),
	seed: z.number().int(),
	/** cache / block budget given to the engine; null = unlimited */
	memoryBytes: z.number().positive().nullable(),
	/** reader throttle given to the engine; null = unthrottled */
	diskMBps: z.number().positive().nullable(),
	/** rows in RAM over all rows the budget allows (1 = everything fits) */
	cacheFraction: z.number().positive(),
	/** blocks the budget implies for block and selective (1 otherwise) */
	blocks: z.number().int().positive(),
	/** trainer updates per row the reader delivers in the same time (trainer-to-reader speed ratio) */
	updatesPerRead: z.number().positive(),
	bytesOnDisk: z.number().positive(),
	/** what the engine reported */
	epochs: z.number(),
	passes: z.number(),
	updates: z.number(),
	cacheHitRate: z.number(),
	readSeconds: z.number(),
	computeSeconds: z.number(),
	wallSeconds: z.number(),
	peakMemoryBytes: z.number(),
	outerIterations: z.number(),
	gap: z.number(),
	/** stopped by the calibration's time cap on its epochs, short of tol: kept for the record, left out of the fit */
	capped: z.boolean().optional(),
	/** (seconds, relative duality gap) as the run converged; absent in records made before it was kept */
	trace: z.array(z.object({ seconds: z.number(), gap: z.number() })).optional(),
	/** ns per update of the reference kernel measured just before this strategy's runs (machine load at the time) */
	referenceNs: z.number().positive()
});

/** Per-update cost of the sparse kernel at one (k, d). */
export const kernelPointSchema = z.object({
	nnzPerRow: z.number().positive(),
	features: z.number().int().positive(),
	nsPerUpdate: z.number().positive(),
	/** bytes of the row set the kernel cycled over (absent: the default 2–4 MiB) */
	rowBytes: z.number().positive().optional()
});

/** The data a calibration ran on: synthetic rows shaped like the plan, or rows of an uploaded sample. */
export const calibrationDataSchema = z.discriminatedUnion('source', [
	z.object({ source: z.literal('synthetic') }),
	z.object({
		source: z.literal('sample'),
		/** rows the sample holds (no run used more) */
		rows: z.number().int().positive(),
		features: z.number().int().positive(),
		uploadId: z.string().optional(),
		/** the sample's file name as uploaded */
		name: z.string().optional()
	})
]);

export const calibrationRecordSchema = z.object({
	kind: z.literal('loadline-calibration'),
	version: z.literal(1),
	machine: z.object({
		cpuModel: z.string(),
		cores: z.number().int().positive(),
		ramBytes: z.number().positive(),
		node: z.string(),
		platform: z.string(),
		date: z.string(),
		/** relative core speed of this machine at its median load during the calibration (reference core = 1, see calibrate/kernel.ts) */
		coreSpeed: z.number().positive(),
		/** median ns per update of the reference kernel over the calibration; kernel and decode figures are stated at this load */
		referenceNs: z.number().positive()
	}),
	/** the plan this calibration was made for */
	plan: planSchema,
	/** feature dimension of the kernel measurements and the runs' weight vectors: the plan's, capped to what this machine can hold (a sample's own) */
	features: z.number().int().positive(),
	seeds: z.array(z.number().int()).min(1),
	durationSeconds: z.number().nonnegative(),
	kernel: z.array(kernelPointSchema).min(1),
	/** unthrottled throughput in MB/s of uncompressed bytes: binary decode, text parse, gunzip */
	decode: z.object({ binaryMBps: z.number().positive(), textMBps: z.number().positive(), gunzipMBps: z.number().positive() }),
	runs: z.array(calibrationRunSchema).min(1),
	/** what the runs ran on; absent in records made before samples could be used (synthetic) */
	data: calibrationDataSchema.optional(),
	/** what could not be emulated, in words */
	notes: z.array(z.string())
});

export type CalibrationRun = z.infer<typeof calibrationRunSchema>;
export type CalibrationData = z.infer<typeof calibrationDataSchema>;
export type KernelPoint = z.infer<typeof kernelPointSchema>;
export type CalibrationRecord = z.infer<typeof calibrationRecordSchema>;
