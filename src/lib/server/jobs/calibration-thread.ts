/** Runs one calibration in a worker thread, so the worker's event loop stays free for heartbeats and a cancel can stop it at once. */
import { parentPort, workerData } from 'node:worker_threads';
import { join } from 'node:path';
import { calibrate, type CalibrateOptions } from '../../engine/calibrate/run.js';
import type { Plan } from '../../schemas/plan.js';
import { writeSampleRows, type SampleSource } from '../uploads/sample-rows.js';

export interface ThreadInput {
	plan: Plan;
	/** workDir is always set (run-calibration.ts makes and removes it) */
	options: Omit<CalibrateOptions, 'onProgress' | 'sample'>;
	/** an uploaded sample to run on instead of synthetic data; converted to binary rows in the work folder first */
	sample?: SampleSource;
}

export type ThreadMessage =
	| { type: 'progress'; phase: string; fraction: number; message: string }
	| { type: 'done'; record: unknown }
	| { type: 'error'; message: string };

const { plan, options, sample } = workerData as ThreadInput;
const post = (m: ThreadMessage) => parentPort!.postMessage(m);
try {
	if (sample) post({ type: 'progress', phase: 'sample', fraction: 0, message: `reading the uploaded sample ${sample.fileName}` });
	const rows = sample ? await writeSampleRows(sample, join(options.workDir!, 'sample.bin')) : undefined;
	const record = await calibrate(plan, { ...options, ...(rows && { sample: rows }), onProgress: (p) => post({ type: 'progress', phase: p.phase, fraction: p.fraction, message: p.message }) });
	post({ type: 'done', record });
} catch (err) {
	post({ type: 'error', message: err instanceof Error ? err.message : String(err) });
}
