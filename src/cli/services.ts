/** Pieces `npm start` and the test setup share: the fake inbox, the build, the web server. */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { existsSync, readdirSync, statSync } from 'node:fs';
import { connect } from 'node:net';
import { join } from 'node:path';

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

/** Build with vite when build/ is missing or older than any source. */
export function buildIfStale(log = console.log): void {
	const built = existsSync(join(root, 'build/index.js')) ? statSync(join(root, 'build/index.js')).mtimeMs : 0;
	const newest = Math.max(...buildInputs.map((p) => newestMtime(join(root, p))));
	if (built > newest) return;
	log('Building the app (sources changed since the last build)…');
	// The bundler's dependency notes are noise here; show the output only when the build fails.
	const r = spawnSync(join(root, 'node_modules/.bin/vite'), ['build', '--logLevel', 'error'], { cwd: root, encoding: 'utf8', maxBuffer: 64 << 20 });
	if (r.status !== 0) {
		console.error(`${r.stdout}\n${r.stderr}`.split('\n').slice(-80).join('\n'));
		throw new Error(`vite build failed with code ${r.status}`);
	}
}

/** The built SvelteKit server (adapter-node) on 127.0.0.1:port. */
export async function serveApp(port: number, env: Record<string, string>): Promise<ChildProcess> {
	const child = spawn(process.execPath, [join(root, 'build/index.js')], {
		cwd: root,
		env: { ...process.env, ...env, HOST: '127.0.0.1', PORT: String(port), ORIGIN: `http://127.0.0.1:${port}` },
		stdio: ['ignore', 'inherit', 'inherit']
	});
	await waitForPort(port, 60_000, child);
	return child;
}
