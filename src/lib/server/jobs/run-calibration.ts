/** One calibration in a worker thread: progress as it goes, a record at the end, or a stop on request. */
import { Worker } from 'node:worker_threads';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Plan } from '../../schemas/plan.js';
import type { ThreadInput, ThreadMessage } from './calibration-thread.js';

export interface Running {
	/** resolves to the record, or null when stopped; rejects with the engine's message */
	result: Promise<unknown | null>;
	stop: () => void;
}

export function runCalibration(plan: Plan, options: ThreadInput['options'], onProgress: (phase: string, message: string) => void, sample?: ThreadInput['sample']): Running {
	// our own folder: a stopped thread cannot clean up after itself
	const workDir = mkdtempSync(join(tmpdir(), 'loadline-job-'));
	const input: ThreadInput = { plan, options: { ...options, workDir }, ...(sample && { sample }) };
	const thread = new Worker(new URL('./calibration-thread-boot.mjs', import.meta.url), { workerData: input });
	let stopped = false;
	const result = new Promise<unknown | null>((resolve, reject) => {
		let settled = false;
		const settle = (fn: () => void) => {
			if (settled) return;
			settled = true;
			rmSync(workDir, { recursive: true, force: true });
			fn();
		};
		thread.on('message', (m: ThreadMessage) => {
			if (m.type === 'progress') onProgress(m.phase, m.message);
			else if (m.type === 'done') settle(() => resolve(m.record));
			else settle(() => reject(new Error(m.message)));
		});
		thread.on('error', (err) => settle(() => reject(err)));
		thread.on('exit', (code) => settle(() => (stopped ? resolve(null) : reject(new Error(`calibration thread exited with code ${code}`)))));
	});
	return {
		result,
		stop: () => {
			stopped = true;
			void thread.terminate();
		}
	};
}
