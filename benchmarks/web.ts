/**
 * Web benchmarks on loopback, against a throwaway stack of our own (PostgreSQL cluster, fresh build):
 *  1. POST /api/estimate latency, 20 concurrent clients for 30 s each (target p95 ≤ 50 ms, no errors):
 *     the keystroke request (whatIf: false), the same naming a calibration of the team's own, and the
 *     request with the what-if curves; bodies rotate through RAM values, never one repeated body;
 *  2. load: 200 concurrent clients on both estimate requests and the plans list for 30 s (target zero errors);
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
import { calibrations, memberships, projects, sessions, teams, users } from '../src/lib/server/db/schema.js';
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
// a run that fails midway leaves no server or cluster behind
process.on('exit', () => {
	app.kill('SIGKILL');
	stopCluster(dataDir);
});

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
// A calibration record of the team's own (the built-in one's measurements), as a saved plan names it after calibrating.
const record = JSON.parse(readFileSync(join(root, 'src/lib/server/baseline-calibration.json'), 'utf8'));
const [calibration] = await db.insert(calibrations).values({ teamId: team.id, shapeKey: 'bench', record }).returning();

// What the editor sends while someone types: the plan with RAM stepping through 4…256 GiB.
const RAM = Array.from({ length: 64 }, (_, i) => 4 * (i + 1));
const bodies = (extra: Record<string, unknown>) => RAM.map((ramGiB) => JSON.stringify({ plan: { ...plan, machine: { ...plan.machine, ramGiB } }, teamId: team.id, ...extra }));
const keystroke = bodies({ whatIf: false });
const keystrokeCalibrated = bodies({ whatIf: false, calibrationId: calibration.id });
const withCurves = bodies({ whatIf: true });

interface Run {
	requests: number;
	errors: number;
	non2xx: number;
	p50: number;
	p95: number;
	p99: number;
	rps: number;
}

/** A POST /api/estimate that takes the next body of the list on every request. */
function rotating(list: string[]): autocannon.Request {
	let i = 0;
	return { method: 'POST', path: '/api/estimate', setupRequest: (req) => ({ ...req, body: list[i++ % list.length] }) };
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

// warm the model fits and check what each request gets back
for (const [body, curves, calibrationId] of [[keystroke[0], false, 'built-in'], [keystrokeCalibrated[0], false, calibration.id], [withCurves[0], true, 'built-in']] as const) {
	const res = await fetch(`${base}/api/estimate`, { method: 'POST', headers, body });
	const got = await res.json();
	if (!res.ok || ('whatIf' in got) !== curves || got.calibration.id !== calibrationId) throw new Error(`unexpected estimate answer ${res.status}: ${JSON.stringify(got).slice(0, 300)}`);
}
const size = async (body: string) => (await (await fetch(`${base}/api/estimate`, { method: 'POST', headers, body })).arrayBuffer()).byteLength;
const sizes = { keystroke: await size(keystroke[0]), curves: await size(withCurves[0]) };
const loads = [loadavg()[0]];
const estimate = await load(20, [rotating(keystroke)]);
loads.push(loadavg()[0]);
const calibrated = await load(20, [rotating(keystrokeCalibrated)]);
loads.push(loadavg()[0]);
const curves = await load(20, [rotating(withCurves)]);
loads.push(loadavg()[0]);
const mixed = await load(200, [rotating(keystroke), rotating(withCurves), { method: 'GET', path: `/api/plans?projectId=${project.id}` }]);
loads.push(loadavg()[0]);

// JavaScript the plan page loads, as the browser receives it, gzipped here to count what travels.
const browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'] });
const context = await browser.newContext();
await context.addCookies([{ name: 'authjs.session-token', value: token, url: base }]);
const page = await context.newPage();
const js: { url: string; bytes: number; gzip: number }[] = [];
const reading: Promise<void>[] = [];
page.on('response', (res) => {
	if (!res.url().endsWith('.js')) return;
	reading.push(res.body().then((body) => void js.push({ url: res.url(), bytes: body.length, gzip: gzipSync(body, { level: 9 }).length })));
});
const [firstPlan] = (await (await fetch(`${base}/api/plans?projectId=${project.id}`, { headers })).json()).rows;
await page.goto(`${base}/teams/${team.id}/plans/${firstPlan.id}`, { waitUntil: 'networkidle' });
await Promise.all(reading); // every body read before the browser closes
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
const row = (what: string, r: Run, target: string) =>
	`| ${what} | ${r.requests} | ${r.errors} | ${r.non2xx} | ${r.rps.toFixed(0)} | ${ms(r.p50)} | ${ms(r.p95)} | ${ms(r.p99)} | ${target} |`;
const p95Target = (r: Run) => verdict(r.p95 <= 50 && r.errors + r.non2xx === 0);
const md = `# Web benchmarks

Machine: ${cpus()[0].model}, ${cpus().length} cores; Node ${process.version}; ${new Date().toISOString().slice(0, 16).replace('T', ' ')} UTC.
Load average (1 min) before each run, in order: ${loads.map((l) => l.toFixed(1)).join(', ')} (other work on the machine inflates latencies).
Server: the production build (adapter-node) on 127.0.0.1 with its own PostgreSQL 15 cluster; client: autocannon in the same process, so client and server share the ${cpus().length} cores.
Command: \`npx tsx benchmarks/web.ts\` (BENCH_SECONDS=${SECONDS}).

## POST /api/estimate, 20 concurrent clients, ${SECONDS} s each

| request | requests | errors | non-2xx | req/s | p50 | p95 | p99 | target p95 ≤ 50 ms |
|---|---|---|---|---|---|---|---|---|
${row('keystroke (`whatIf: false`), built-in calibration', estimate, p95Target(estimate))}
${row('keystroke, naming a calibration of the team', calibrated, p95Target(calibrated))}
${row('with the what-if curves (`whatIf: true`)', curves, p95Target(curves))}

Bodies rotate through ${RAM.length} plans that differ in RAM (4–256 GiB). The keystroke request predicts the four strategies once (answer ${(sizes.keystroke / 1024).toFixed(1)} kB); the curves request also predicts them for ${'~'}25 what-if points, RAM and disk (answer ${(sizes.curves / 1024).toFixed(1)} kB). The editor sends the curves request only when a field the curves depend on changed. Each request checks the session and the team membership in PostgreSQL; the team's calibration lookup is reused for a few seconds.

## Load: 200 concurrent clients on both estimate requests and the plans list, ${SECONDS} s

| requests | errors | non-2xx | req/s | p50 | p95 | p99 | target zero errors |
|---|---|---|---|---|---|---|---|
| ${mixed.requests} | ${mixed.errors} | ${mixed.non2xx} | ${mixed.rps.toFixed(0)} | ${ms(mixed.p50)} | ${ms(mixed.p95)} | ${ms(mixed.p99)} | ${verdict(mixed.errors + mixed.non2xx === 0)} |

## JavaScript of the plan page

${js.length} files, ${(jsBytes / 1024).toFixed(0)} kB as sent, **${(jsGzip / 1024).toFixed(0)} kB gzipped** (gzip -9 of each file).
`;
writeFileSync(join(root, 'benchmarks/results/web.md'), md);
console.log(md);
process.exit(0);
