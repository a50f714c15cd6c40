/**
 * Web benchmarks on loopback, against a throwaway stack of our own (PostgreSQL cluster, fresh build):
 *  1. POST /api/estimate latency, 20 concurrent clients for 30 s (target p95 ≤ 50 ms, no errors);
 *  2. load: 200 concurrent clients on /api/estimate and the plans list for 30 s (target zero errors);
 *  3. JavaScript the plan page sends to the browser, gzipped.
 * Run: npx tsx benchmarks/web.ts   (writes benchmarks/results/web.md)
 */
import autocannon from 'autocannon';
import { randomBytes } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { cpus, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { chromium } from 'playwright-core';
import { ensureDatabase, freePort, startCluster, stopCluster } from '../src/lib/server/db/cluster.js';
import { applyMigrations } from '../src/lib/server/db/migrate.js';
import { createDb } from '../src/lib/server/db/client.js';
import { memberships, projects, sessions, teams, users } from '../src/lib/server/db/schema.js';
import { buildIfStale, root, serveApp, testBuild } from '../src/cli/services.js';

const SECONDS = Number(process.env.BENCH_SECONDS ?? 30);
const plan = JSON.parse(readFileSync(join(root, 'tests/fixtures/plan-example.json'), 'utf8'));

const dir = mkdtempSync(join(tmpdir(), 'loadline-bench-'));
const dataDir = join(dir, 'pg');
const build = testBuild(`bench-${process.pid}`);
const cluster = startCluster(dataDir, await freePort());
const url = await ensureDatabase(cluster, 'loadline_bench');
await applyMigrations(url);
buildIfStale(build);
const port = await freePort();
const app = await serveApp(port, { DATABASE_URL: url, AUTH_SECRET: randomBytes(32).toString('base64url'), SMTP_URL: 'smtp://127.0.0.1:1' }, build);
const base = `http://127.0.0.1:${port}`;

// A signed-in member with a project and a few saved plans; the session row stands in for a magic-link sign-in.
const { db, client } = createDb(url, 2);
const [user] = await db.insert(users).values({ email: 'bench@example.org', name: 'bench' }).returning();
const [team] = await db.insert(teams).values({ name: 'bench team' }).returning();
await db.insert(memberships).values({ teamId: team.id, userId: user.id, role: 'editor' });
const [project] = await db.insert(projects).values({ teamId: team.id, name: 'bench project' }).returning();
const token = randomBytes(24).toString('hex');
await db.insert(sessions).values({ sessionToken: token, userId: user.id, expires: new Date(Date.now() + 86_400_000) });
const cookie = `authjs.session-token=${token}`;
const headers = { cookie, origin: base, 'content-type': 'application/json' };
for (let i = 0; i < 10; i++) await fetch(`${base}/api/plans`, { method: 'POST', headers, body: JSON.stringify({ projectId: project.id, name: `plan ${i}`, plan: { ...plan, machine: { ...plan.machine, ramGiB: 8 * (i + 1) } } }) });
const estimateBody = JSON.stringify({ plan, teamId: team.id });

interface Run {
	requests: number;
	errors: number;
	non2xx: number;
	p50: number;
	p95: number;
	p99: number;
	rps: number;
}

async function load(connections: number, requests: autocannon.Request[]): Promise<Run> {
	const times: number[] = [];
	const instance = autocannon({ url: base, connections, duration: SECONDS, headers, requests });
	instance.on('response', (_c: unknown, _status: number, _bytes: number, ms: number) => times.push(ms));
	const r = await instance;
	times.sort((a, b) => a - b);
	const q = (p: number) => times[Math.min(times.length - 1, Math.floor(p * times.length))] ?? NaN;
	return { requests: r.requests.total, errors: r.errors + r.timeouts, non2xx: r.non2xx, p50: q(0.5), p95: q(0.95), p99: q(0.99), rps: r.requests.average };
}

await fetch(`${base}/api/estimate`, { method: 'POST', headers, body: estimateBody }); // warm the model fit
const load1 = loadavg()[0];
const estimate = await load(20, [{ method: 'POST', path: '/api/estimate', body: estimateBody }]);
const mixed = await load(200, [
	{ method: 'POST', path: '/api/estimate', body: estimateBody },
	{ method: 'GET', path: `/api/plans?projectId=${project.id}` }
]);

// JavaScript the plan page loads, as the browser receives it, gzipped here to count what travels.
const browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'] });
const context = await browser.newContext();
await context.addCookies([{ name: 'authjs.session-token', value: token, url: base }]);
const page = await context.newPage();
const js: { url: string; bytes: number; gzip: number }[] = [];
page.on('response', async (res) => {
	if (!res.url().endsWith('.js')) return;
	const body = await res.body();
	js.push({ url: res.url(), bytes: body.length, gzip: gzipSync(body, { level: 9 }).length });
});
const [firstPlan] = (await (await fetch(`${base}/api/plans?projectId=${project.id}`, { headers })).json()).rows;
await page.goto(`${base}/teams/${team.id}/plans/${firstPlan.id}`, { waitUntil: 'networkidle' });
await browser.close();
const jsBytes = js.reduce((s, f) => s + f.bytes, 0);
const jsGzip = js.reduce((s, f) => s + f.gzip, 0);

await client.end();
app.kill('SIGTERM');
stopCluster(dataDir);
rmSync(dir, { recursive: true, force: true });
rmSync(join(root, build.out, '..'), { recursive: true, force: true });

const ms = (x: number) => `${x.toFixed(1)} ms`;
const verdict = (ok: boolean) => (ok ? 'met' : 'missed');
const md = `# Web benchmarks

Machine: ${cpus()[0].model}, ${cpus().length} cores; Node ${process.version}; ${new Date().toISOString().slice(0, 10)}.
Load average at the start: ${load1.toFixed(1)} (other work on the machine inflates latencies).
Server: the production build (adapter-node) on 127.0.0.1 with its own PostgreSQL 15 cluster; client: autocannon in the same process, so client and server share the 2 cores.
Command: \`npx tsx benchmarks/web.ts\` (BENCH_SECONDS=${SECONDS}).

## POST /api/estimate, 20 concurrent clients, ${SECONDS} s

| requests | errors | non-2xx | req/s | p50 | p95 | p99 | target p95 ≤ 50 ms |
|---|---|---|---|---|---|---|---|
| ${estimate.requests} | ${estimate.errors} | ${estimate.non2xx} | ${estimate.rps.toFixed(0)} | ${ms(estimate.p50)} | ${ms(estimate.p95)} | ${ms(estimate.p99)} | ${verdict(estimate.p95 <= 50 && estimate.errors + estimate.non2xx === 0)} |

Each estimate predicts the four strategies for the plan and for ${'~'}25 what-if points (RAM and disk curves), on the built-in calibration.

## Load: 200 concurrent clients on /api/estimate and the plans list, ${SECONDS} s

| requests | errors | non-2xx | req/s | p50 | p95 | p99 | target zero errors |
|---|---|---|---|---|---|---|---|
| ${mixed.requests} | ${mixed.errors} | ${mixed.non2xx} | ${mixed.rps.toFixed(0)} | ${ms(mixed.p50)} | ${ms(mixed.p95)} | ${ms(mixed.p99)} | ${verdict(mixed.errors + mixed.non2xx === 0)} |

## JavaScript of the plan page

${js.length} files, ${(jsBytes / 1024).toFixed(0)} kB as sent, **${(jsGzip / 1024).toFixed(0)} kB gzipped** (gzip -9 of each file).
`;
writeFileSync(join(root, 'benchmarks/results/web.md'), md);
console.log(md);
process.exit(0);
