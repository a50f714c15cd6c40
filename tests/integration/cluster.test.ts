/** Loadline's own PostgreSQL: starting twice works, and so does starting after a crash left a stale postmaster.pid. */
import { afterAll, describe, expect, it } from 'vitest';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import postgres from 'postgres';
import { ensureLocalDatabase } from '../../src/lib/server/db/local.js';
import { freePort, stopCluster } from '../../src/lib/server/db/cluster.js';

const dir = mkdtempSync(join(tmpdir(), 'loadline-cluster-'));
const dataDir = join(dir, 'pg');
afterAll(() => {
	try {
		stopCluster(dataDir);
	} finally {
		rmSync(dir, { recursive: true, force: true });
	}
});

async function tables(url: string) {
	const sql = postgres(url, { max: 1, onnotice: () => {} });
	try {
		return (await sql`select tablename from pg_tables where schemaname = 'public' order by 1`).map((r) => r.tablename as string);
	} finally {
		await sql.end();
	}
}

describe('own cluster', () => {
	it('creates, migrates, survives a second start and a crash', async () => {
		const port = await freePort();
		const first = await ensureLocalDatabase({ dataDir, port, name: 'loadline_cluster' });
		expect(await tables(first.url)).toEqual(expect.arrayContaining(['membership', 'project', 'session', 'team', 'user', 'verificationToken']));

		const second = await ensureLocalDatabase({ dataDir, port, name: 'loadline_cluster' });
		expect(second.url).toBe(first.url);

		// crash: kill the postmaster hard, leaving postmaster.pid behind
		const pid = Number(readFileSync(join(dataDir, 'postmaster.pid'), 'utf8').split('\n')[0]);
		process.kill(pid, 'SIGKILL');
		await new Promise((r) => setTimeout(r, 1500));
		expect(existsSync(join(dataDir, 'postmaster.pid'))).toBe(true);
		const third = await ensureLocalDatabase({ dataDir, port, name: 'loadline_cluster' });
		expect(await tables(third.url)).toContain('project');
	});
});
