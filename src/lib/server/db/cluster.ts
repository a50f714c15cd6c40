/**
 * Loadline's own PostgreSQL: find Debian's binaries (installing them when missing),
 * create a cluster in a folder, start it on loopback, create the database.
 * initdb and pg_ctl refuse to run as root, so as root they run as the `postgres` OS user.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { chmodSync, existsSync, mkdirSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { createServer } from 'node:net';
import { join, resolve, dirname } from 'node:path';
import postgres from 'postgres';

const PG_ROOT = '/usr/lib/postgresql';
const isRoot = process.getuid?.() === 0;

/** Directory holding initdb/pg_ctl of the newest installed PostgreSQL; installs Debian's package when absent. */
export function findPgBin(install = true): string {
	const pick = () => {
		if (!existsSync(PG_ROOT)) return null;
		const versions = readdirSync(PG_ROOT)
			.filter((v) => existsSync(join(PG_ROOT, v, 'bin', 'pg_ctl')))
			.sort((a, b) => Number(b) - Number(a));
		return versions.length ? join(PG_ROOT, versions[0], 'bin') : null;
	};
	const found = pick();
	if (found || !install) {
		if (!found) throw new Error(`PostgreSQL binaries not found under ${PG_ROOT}`);
		return found;
	}
	console.log('PostgreSQL not found: installing Debian package "postgresql" with apt-get…');
	const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
	execFileSync('apt-get', ['update'], { stdio: 'inherit', env });
	execFileSync('apt-get', ['install', '-y', '--no-install-recommends', 'postgresql'], { stdio: 'inherit', env });
	const after = pick();
	if (!after) throw new Error('apt-get finished but PostgreSQL binaries are still missing');
	return after;
}

function runPg(bin: string, tool: string, args: string[]) {
	const cmd = join(bin, tool);
	const [file, argv] = isRoot ? ['runuser', ['-u', 'postgres', '--', cmd, ...args]] : [cmd, args];
	const r = spawnSync(file, argv, { encoding: 'utf8' });
	if (r.status !== 0) throw new Error(`${tool} failed (${r.status}): ${r.stderr || r.stdout}`);
	return r.stdout;
}

export interface Cluster {
	dataDir: string;
	port: number;
	bin: string;
	url(database: string): string;
}

/** Create the cluster folder when new. As root the folder belongs to `postgres` and its parents must be traversable. */
export function initCluster(dataDir: string, bin = findPgBin()): void {
	dataDir = resolve(dataDir);
	if (existsSync(join(dataDir, 'PG_VERSION'))) return;
	mkdirSync(dataDir, { recursive: true, mode: 0o700 });
	if (isRoot) {
		for (let p = dirname(dataDir); p !== '/'; p = dirname(p)) {
			try {
				// postgres must reach its folder through every parent (mkdtemp makes 0700 folders)
				const mode = (execFileSync('stat', ['-c', '%a', p], { encoding: 'utf8' }).trim());
				if (!/[157]$/.test(mode)) chmodSync(p, parseInt(mode, 8) | 0o711);
			} catch {
				break;
			}
		}
		execFileSync('chown', ['-R', 'postgres:postgres', dataDir]);
	}
	runPg(bin, 'initdb', ['-D', dataDir, '-U', 'postgres', '--auth=trust', '-E', 'UTF8', '--locale=C.UTF-8']);
}

/** A live postmaster: the pid exists, is not a zombie, and is a postgres process (pids are reused after a crash). */
function postmasterAlive(pid: number): boolean {
	try {
		const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
		const state = stat.slice(stat.lastIndexOf(')') + 2, stat.lastIndexOf(')') + 3);
		return state !== 'Z' && stat.includes('(postgres)');
	} catch {
		return false;
	}
}

/** Start the cluster on 127.0.0.1:port unless it already runs; clears a stale postmaster.pid left by a crash. */
export function startCluster(dataDir: string, port: number, bin = findPgBin()): Cluster {
	dataDir = resolve(dataDir);
	initCluster(dataDir, bin);
	const pidFile = join(dataDir, 'postmaster.pid');
	if (existsSync(pidFile)) {
		const pid = Number(readFileSync(pidFile, 'utf8').split('\n')[0]);
		if (pid && postmasterAlive(pid)) return cluster(dataDir, port, bin);
		// A crashed postmaster left its lock files; PostgreSQL would take an unreaped (zombie) pid for a live one.
		rmSync(pidFile, { force: true });
		for (const f of readdirSync(dataDir)) if (/^\.s\.PGSQL\.\d+\.lock$/.test(f)) rmSync(join(dataDir, f), { force: true });
	}
	const log = join(dataDir, 'server.log');
	try {
		runPg(bin, 'pg_ctl', ['-D', dataDir, '-l', log, '-w', '-t', '60', '-o', `-p ${port} -c listen_addresses=127.0.0.1 -k ${dataDir} -c fsync=on`, 'start']);
	} catch (e) {
		// pg_ctl only says "examine the log": put the log's last lines in the error
		const tail = existsSync(log) ? readFileSync(log, 'utf8').trim().split('\n').slice(-8).join('\n') : '(no server log)';
		throw new Error(`${(e as Error).message.trim()}\nserver log ${log}:\n${tail}`);
	}
	return cluster(dataDir, port, bin);
}

export function stopCluster(dataDir: string, bin = findPgBin(false)): void {
	if (!existsSync(join(resolve(dataDir), 'postmaster.pid'))) return;
	runPg(bin, 'pg_ctl', ['-D', resolve(dataDir), '-m', 'fast', '-w', 'stop']);
}

function cluster(dataDir: string, port: number, bin: string): Cluster {
	return { dataDir, port, bin, url: (db) => `postgres://postgres@127.0.0.1:${port}/${db}` };
}

/** Create the database when missing. */
export async function ensureDatabase(c: Cluster, name: string): Promise<string> {
	if (!/^[a-z_][a-z0-9_]*$/.test(name)) throw new Error(`invalid database name "${name}"`);
	const sql = postgres(c.url('postgres'), { max: 1, onnotice: () => {} });
	try {
		const rows = await sql`select 1 from pg_database where datname = ${name}`;
		if (rows.length === 0) await sql.unsafe(`create database ${name}`);
	} finally {
		await sql.end();
	}
	return c.url(name);
}

/** A free TCP port on loopback. */
export function freePort(): Promise<number> {
	return new Promise((res, rej) => {
		const srv = createServer();
		srv.once('error', rej);
		srv.listen(0, '127.0.0.1', () => {
			const addr = srv.address();
			srv.close(() => (typeof addr === 'object' && addr ? res(addr.port) : rej(new Error('no port'))));
		});
	});
}
