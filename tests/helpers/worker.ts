/** Queue workers as child processes against the test database, with a tiny calibration so tests stay fast. */
import { spawn, type ChildProcess } from 'node:child_process';
import { join } from 'node:path';
import { inject } from 'vitest';

const root = join(import.meta.dirname, '../..');

export interface TestWorker {
	child: ChildProcess;
	output: () => string;
	/** resolves once the worker logged a line matching re */
	waitFor: (re: RegExp, timeoutMs?: number) => Promise<void>;
	stop: () => Promise<void>;
}

/** Test settings: a 1-second calibration budget on at most 2000 rows, a short heartbeat timeout and retry delay (all documented in jobs/config.ts). */
export const TEST_WORKER_ENV = {
	LOADLINE_CALIBRATION_SECONDS: '1',
	LOADLINE_CALIBRATION_MAX_ROWS: '2000',
	LOADLINE_JOB_STALE_SECONDS: '6',
	LOADLINE_JOB_EXPIRE_SECONDS: '120',
	LOADLINE_JOB_RETRY_DELAY_SECONDS: '1',
	LOADLINE_MAINTENANCE_SECONDS: '1',
	LOADLINE_POLL_SECONDS: '0.5'
};

export async function startWorker(env: Record<string, string> = {}): Promise<TestWorker> {
	// node itself with tsx's loader (not the tsx command, which runs a second process): a kill reaches the worker
	const child = spawn(process.execPath, ['--import', 'tsx', join(root, 'src/cli/worker.ts')], {
		cwd: root,
		env: { ...process.env, ...TEST_WORKER_ENV, ...env, DATABASE_URL: inject('databaseUrl'), UPLOAD_DIR: inject('uploadDir'), SMTP_URL: inject('smtpUrl'), ORIGIN: inject('baseUrl') },
		stdio: ['ignore', 'pipe', 'pipe']
	});
	let log = '';
	const waiters: { re: RegExp; done: () => void }[] = [];
	const take = (chunk: Buffer) => {
		log += chunk.toString();
		for (const w of [...waiters]) if (w.re.test(log)) (waiters.splice(waiters.indexOf(w), 1), w.done());
	};
	child.stdout!.on('data', take);
	child.stderr!.on('data', take);
	const waitFor = (re: RegExp, timeoutMs = 30_000) =>
		new Promise<void>((resolve, reject) => {
			if (re.test(log)) return resolve();
			const t = setTimeout(() => reject(new Error(`worker did not log ${re} within ${timeoutMs} ms; it logged:\n${log}`)), timeoutMs);
			waiters.push({ re, done: () => (clearTimeout(t), resolve()) });
			child.once('exit', (code) => reject(new Error(`worker exited (${code}) before logging ${re}:\n${log}`)));
		});
	await waitFor(/ready: waiting/);
	return {
		child,
		output: () => log,
		waitFor,
		stop: async () => {
			if (child.exitCode !== null || child.signalCode !== null) return;
			const exited = new Promise((r) => child.once('exit', r));
			child.kill('SIGTERM');
			await Promise.race([exited, new Promise((r) => setTimeout(r, 8000))]);
			if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL');
		}
	};
}
