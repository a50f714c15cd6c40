/** Runs one calibration in a worker thread, so the worker's event loop stays free for heartbeats and a cancel can stop it at once. */
import { parentPort, workerData } from 'node:worker_threads';
import { calibrate, type CalibrateOptions } from '../../engine/calibrate/run.js';
import type { Plan } from '../../schemas/plan.js';

export interface ThreadInput {
	plan: Plan;
	options: Omit<CalibrateOptions, 'onProgress'>;
}

export type ThreadMessage =
	| { type: 'progress'; phase: string; fraction: number; message: string }
	| { type: 'done'; record: unknown }
	| { type: 'error'; message: string };

const { plan, options } = workerData as ThreadInput;
const post = (m: ThreadMessage) => parentPort!.postMessage(m);
try {
	const record = await calibrate(plan, { ...options, onProgress: (p) => post({ type: 'progress', phase: p.phase, fraction: p.fraction, message: p.message }) });
	post({ type: 'done', record });
} catch (err) {
	post({ type: 'error', message: err instanceof Error ? err.message : String(err) });
}
