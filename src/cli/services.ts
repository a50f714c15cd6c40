/** Pieces `npm start` and the test setup share: the fake inbox, the build, the web server. */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, rmSync, statSync } from 'node:fs';
import { connect } from 'node:net';
import { dirname, join } from 'node:path';
import { uploadLimitBytes } from '../lib/server/uploads/config.js';

export const root = new URL('../..', import.meta.url).pathname;

/** Wait until something accepts TCP connections on 127.0.0.1:port. */
export async function waitForPort(port: number, timeoutMs = 60_000, child?: ChildProcess): Promise<void> {
	const until = Date.now() + timeoutMs;
	while (Date.now() < until) {
		if (child && child.exitCode !== null) throw new Error(`process exited with code ${child.exitCode} before listening on ${port}`);
		const ok = await new Promise<boolean>((res) => {
			const s = connect(port, '127.0.0.1');
			s.once('connect', () => (s.destroy(), res(true)));
			s.once('error', () => res(false));
		});
		if (ok) return;
		await new Promise((r) => setTimeout(r, 200));
	}
	throw new Error(`nothing listens on 127.0.0.1:${port} after ${timeoutMs} ms`);
}

/** maildev on loopback only: SMTP on smtpPort, inbox web UI and REST API on webPort. */
export async function startMaildev(smtpPort: number, webPort: number, mailDir = join(root, '.data/mail')): Promise<ChildProcess> {
	const args = ['--ip', '127.0.0.1', '--web-ip', '127.0.0.1', '-s', String(smtpPort), '-w', String(webPort), '--mail-directory', mailDir, '--silent'];
	const child = spawn(join(root, 'node_modules/.bin/maildev'), args, {
		stdio: ['ignore', 'ignore', 'inherit']
	});
	await waitForPort(webPort, 30_000, child);
	await waitForPort(smtpPort, 30_000, child);
	return child;
}

function newestMtime(path: string): number {
	if (!existsSync(path)) return 0;
	const st = statSync(path);
	if (!st.isDirectory()) return st.mtimeMs;
	let max = st.mtimeMs;
	for (const name of readdirSync(path)) max = Math.max(max, newestMtime(join(path, name)));
	return max;
}

const buildInputs = ['src', 'static', 'svelte.config.js', 'vite.config.ts', 'package-lock.json', 'tsconfig.json'];

/** Where a build goes: `npm start` serves build/; each test run builds its own copy, so no running app is rebuilt under it. */
export interface BuildTarget {
	/** adapter-node output, relative to the project */
	out: string;
	/** SvelteKit's working folder for this build */
	kitDir: string;
}
export const APP_BUILD: BuildTarget = { out: 'build', kitDir: '.svelte-kit' };
export const testBuild = (run: string): BuildTarget => ({ out: `.data/test-builds/${run}/build`, kitDir: `.data/test-builds/${run}/kit` });

function sleepSync(ms: number) {
	Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ms);
}

/** Build with vite when the build is missing or older than any source; one build at a time per target. */
export function buildIfStale(target: BuildTarget = APP_BUILD, log = console.log): void {
	const entry = join(root, target.out, 'index.js');
	const lock = join(root, `${target.out}.lock`);
	const fresh = () => existsSync(entry) && statSync(entry).mtimeMs > Math.max(...buildInputs.map((p) => newestMtime(join(root, p))));
	if (fresh()) return;
	mkdirSync(dirname(lock), { recursive: true });
	for (let waited = 0; ; waited += 500) {
		try {
			mkdirSync(lock);
			break;
		} catch {
			// another process builds this target; a lock older than 10 minutes is left over from a crash
			if (Date.now() - statSync(lock, { throwIfNoEntry: false })!.mtimeMs > 600_000) rmSync(lock, { recursive: true, force: true });
			sleepSync(500);
		}
	}
	try {
		if (fresh()) return;
		log('Building the app (sources changed since the last build)…');
		// The bundler's dependency notes are noise here; show the output only when the build fails.
		const env = { ...process.env, LOADLINE_BUILD_DIR: target.out, LOADLINE_KIT_DIR: target.kitDir };
		const r = spawnSync(join(root, 'node_modules/.bin/vite'), ['build', '--logLevel', 'error'], { cwd: root, env, encoding: 'utf8', maxBuffer: 64 << 20 });
		if (r.status !== 0) {
			console.error(`${r.stdout}\n${r.stderr}`.split('\n').slice(-80).join('\n'));
			throw new Error(`vite build failed with code ${r.status}`);
		}
	} finally {
		rmSync(lock, { recursive: true, force: true });
	}
}

/** The built SvelteKit server (adapter-node) on 127.0.0.1:port. */
export async function serveApp(port: number, env: Record<string, string>, target: BuildTarget = APP_BUILD): Promise<ChildProcess> {
	// adapter-node refuses bodies over BODY_SIZE_LIMIT (default 512 kB); sample uploads stream up to the upload limit, checked by the route
	const bodyLimit = String(uploadLimitBytes({ ...process.env, ...env }) + 2 ** 20);
	const child = spawn(process.execPath, [join(root, target.out, 'index.js')], {
		cwd: root,
		env: { BODY_SIZE_LIMIT: bodyLimit, ...process.env, ...env, HOST: '127.0.0.1', PORT: String(port), ORIGIN: `http://127.0.0.1:${port}` },
		stdio: ['ignore', 'inherit', 'inherit']
	});
	await waitForPort(port, 60_000, child);
	return child;
}

/** A queue worker (`npm run worker`) with the given environment; it logs to this terminal. */
export function startWorker(env: Record<string, string>): ChildProcess {
	// node with tsx's loader rather than the tsx command, so signals reach the worker itself
	return spawn(process.execPath, ['--import', 'tsx', join(root, 'src/cli/worker.ts')], {
		cwd: root,
		env: { ...process.env, ...env },
		stdio: ['ignore', 'inherit', 'inherit']
	});
}
