/**
 * Training benchmark: in-memory epoch time per nonzero against liblinear-train on the same rows,
 * at a small (< 1 MB) and a large (> 100 MB) weight vector, and the stream strategy's coordinate
 * updates per second and reader MB/s while the trainer runs.
 *
 * Run: npx tsx benchmarks/engine.ts [--sets 1m50-d50k,1m50-d20m,200k500-d50k,200k500-d20m] [--C 0.1] [--eps 0.1] [--no-liblinear] [--no-stream]
 * Data is generated into benchmarks/data/ (git-ignored) on first use and kept (binary and svmlight text
 * of the same seeded rows). Prints a markdown section for benchmarks/results/engine.md.
 *
 * liblinear per-epoch time: (T(full run) − T(one iteration, -e 1e9)) / (#iter − 1), so its load,
 * setup and model writing cancel out. Ours runs the same solver rule (hinge, C, stop when the
 * projected-gradient spread over all examples is ≤ eps, as liblinear's -e eps), and its per-epoch
 * time is the time in coordinate updates / epochs; the duality-gap evaluation is reported apart.
 * As the memory strategy does, a weight vector of 4 MiB or more gets its features renumbered by
 * popularity once after loading (solver/renumber.ts); that one-off cost is reported in its own column.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, statSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { generateToFile, type GenerateOptions } from '../src/lib/engine/data/generate.js';
import { loadBinary, readBinaryHeader } from '../src/lib/engine/data/binary.js';
import { solveRows } from '../src/lib/engine/solver/solve-rows.js';
import { renumberByPopularity, renumbers } from '../src/lib/engine/solver/renumber.js';
import { train } from '../src/lib/engine/solver/train.js';
import type { StreamReport } from '../src/lib/engine/solver/strategy-stream.js';

const { values: flags } = parseArgs({
	options: {
		sets: { type: 'string', default: '1m50-d50k,1m50-d20m,200k500-d50k,200k500-d20m' },
		C: { type: 'string', default: '0.1' },
		eps: { type: 'string', default: '0.1' },
		'no-liblinear': { type: 'boolean', default: false },
		'no-stream': { type: 'boolean', default: false }
	}
});

const base = { positive: 0.4, noise: 0.05, skew: 1, values: 'binary' as const };
const SETS: Record<string, Partial<GenerateOptions>> = {
	'1m50-d50k': { ...base, rows: 1_000_000, features: 50_000, nnz: 50, seed: 41 },
	'1m50-d20m': { ...base, rows: 1_000_000, features: 20_000_000, nnz: 50, seed: 42 },
	'200k500-d50k': { ...base, rows: 200_000, features: 50_000, nnz: 500, seed: 43 },
	'200k500-d20m': { ...base, rows: 200_000, features: 20_000_000, nnz: 500, seed: 44 }
};
const C = Number(flags.C);
const eps = Number(flags.eps);
const dataDir = join(import.meta.dirname, 'data');
const seconds = (t0: number) => (performance.now() - t0) / 1000;
const log = (s: string) => process.stderr.write(s + '\n');

async function ensure(name: string): Promise<{ bin: string; svm: string }> {
	mkdirSync(dataDir, { recursive: true });
	const bin = join(dataDir, `train-${name}.bin`);
	const svm = join(dataDir, `train-${name}.svm`);
	for (const [path, format] of [[bin, 'bin'], [svm, 'svm']] as const) {
		if (existsSync(path)) continue;
		log(`generating ${path}`);
		await generateToFile(SETS[name], path + '.part', format);
		execFileSync('mv', [path + '.part', path]);
	}
	return { bin, svm };
}

/** One liblinear-train run: wall seconds, CPU seconds (user + system, from /usr/bin/time) and its iteration count. */
function liblinear(svm: string, eps: number): { s: number; cpu: number; iters: number } {
	const t0 = performance.now();
	const r = spawnSync('/usr/bin/time', ['-f', 'CPU %U %S', 'liblinear-train', '-s', '3', '-c', String(C), '-e', String(eps), '-B', '-1', svm, '/tmp/loadline-bench.model'], { maxBuffer: 1 << 24 });
	const s = seconds(t0);
	if (r.status !== 0) throw new Error(`liblinear-train failed: ${r.stderr.toString()}`);
	const m = r.stdout.toString().match(/#iter = (\d+)/);
	const t = r.stderr.toString().match(/CPU ([\d.]+) ([\d.]+)/);
	return { s, cpu: t ? Number(t[1]) + Number(t[2]) : NaN, iters: m ? Number(m[1]) : NaN };
}

const machine = `${cpus()[0]?.model ?? 'unknown CPU'}, ${cpus().length} cores`;
const date = new Date().toISOString().slice(0, 10);
const lines: string[] = [];
lines.push(`Machine: ${machine}; ${date}; Node ${process.version}; 1-minute load average at start ${loadavg()[0].toFixed(1)}. Command: \`npx tsx benchmarks/engine.ts --sets ${flags.sets} --C ${C} --eps ${eps}\`.`, '');

if (!flags['no-liblinear']) {
	lines.push(`### In-memory epoch time per nonzero, hinge (L1-loss SVM dual), C = ${C}, stop at projected-gradient spread ≤ ${eps} (liblinear-train -s 3 -e ${eps})`, '');
	lines.push('| data | w size | liblinear #iter | liblinear s/epoch wall (CPU) | ours epochs | ours s/epoch wall (CPU) | ns per nonzero wall, ours / liblinear | ratio wall (CPU) | one gap evaluation s (ours) | renumbering s (ours, once) | liblinear load s | load avg |');
	lines.push('|---|---|---|---|---|---|---|---|---|---|---|---|');
}
for (const name of flags.sets.split(',')) {
	if (!SETS[name]) throw new Error(`--sets: unknown set "${name}" (known: ${Object.keys(SETS).join(', ')})`);
	const { bin, svm } = await ensure(name);
	const h = await readBinaryHeader(bin);
	if (flags['no-liblinear']) continue;
	log(`${name}: liblinear full run`);
	const full = liblinear(svm, eps);
	log(`  ${full.s.toFixed(1)} s, ${full.iters} iterations; one-iteration run`);
	const one = liblinear(svm, 1e9);
	const llEpoch = (full.s - one.s) / (full.iters - 1);
	log(`  ${one.s.toFixed(1)} s → ${llEpoch.toFixed(4)} s/epoch; ours`);
	const rows = await loadBinary(bin);
	const tr = performance.now();
	if (renumbers(h.d)) renumberByPopularity(rows);
	const renumberSeconds = seconds(tr);
	const cpu0 = process.cpuUsage();
	const ours = solveRows(rows, { loss: 'hinge', C, tol: 1e-12, maxEpochs: 100_000, seed: 1, referenceStop: eps });
	const cpu1 = process.cpuUsage(cpu0);
	const ourEpoch = ours.updateSeconds / ours.epochs;
	// CPU of the whole solve (the updates plus one gap evaluation at the end), per epoch
	const ourCpuEpoch = ((cpu1.user + cpu1.system) / 1e6 - ours.gapSeconds) / ours.epochs;
	const llCpuEpoch = (full.cpu - one.cpu) / (full.iters - 1);
	log(`  ${ours.epochs} epochs, ${ourEpoch.toFixed(4)} s/epoch (CPU ${ourCpuEpoch.toFixed(4)}; liblinear CPU ${llCpuEpoch.toFixed(4)})`);
	const ns = (s: number) => ((s / h.nnz) * 1e9).toFixed(2);
	const wBytes = h.d * 8;
	lines.push(
		`| ${name} (${h.n} × ${(h.nnz / h.n).toFixed(0)} nnz, d = ${h.d}) | ${(wBytes / 1e6).toFixed(1)} MB | ${full.iters} | ${llEpoch.toFixed(4)} (${llCpuEpoch.toFixed(4)}) | ${ours.epochs} | ${ourEpoch.toFixed(4)} (${ourCpuEpoch.toFixed(4)}) | ${ns(ourEpoch)} / ${ns(llEpoch)} | ${(ourEpoch / llEpoch).toFixed(2)}× (${(ourCpuEpoch / llCpuEpoch).toFixed(2)}×) | ${ours.gapSeconds.toFixed(4)} | ${renumbers(h.d) ? renumberSeconds.toFixed(2) : '–'} | ${(one.s - llEpoch).toFixed(1)} | ${loadavg()[0].toFixed(1)} |`
	);
	console.log(lines.join('\n'));
}

if (!flags['no-stream']) {
	const name = flags.sets.split(',')[0];
	const { bin } = await ensure(name);
	const size = statSync(bin).size;
	lines.push('', `### Stream strategy on ${name} (${(size / 1e6).toFixed(0)} MB binary rows), hinge, C = ${C}, tol 0.01, max 30 epochs`, '');
	lines.push('| cache budget | disk throttle | updates | updates/s (trainer) | updates/s (wall) | reader MB/s while training (while reading) | passes | epochs | cache hit rate | gap | wall s | peak counted MB | load avg |');
	lines.push('|---|---|---|---|---|---|---|---|---|---|---|---|---|');
	for (const [fraction, mbps] of [[0.25, undefined], [0.25, 200], [0.1, 200]] as const) {
		const memoryBytes = Math.floor(size * fraction) + 64 * 2 ** 20;
		log(`stream: budget ${memoryBytes}, throttle ${mbps ?? 'none'}`);
		const r = (await train({ data: bin, loss: 'hinge', C, strategy: 'stream', tol: 0.01, maxEpochs: 30, memoryBytes, diskMBps: mbps })) as StreamReport;
		lines.push(
			`| ${(memoryBytes / 1e6).toFixed(0)} MB (cache ${(r.cacheBytes / 1e6).toFixed(0)} MB) | ${mbps ? `${mbps} MB/s` : 'none'} | ${r.updates} | ${(r.updates / r.computeSeconds / 1e6).toFixed(2)} M | ${(r.updates / r.wallSeconds / 1e6).toFixed(2)} M | ${r.readerMBps.toFixed(0)} (${r.readerBusyMBps.toFixed(0)}) | ${r.passes} | ${r.epochs.toFixed(1)} | ${r.cacheHitRate.toFixed(3)} | ${r.gap.toExponential(2)} | ${r.wallSeconds.toFixed(1)} | ${(r.peakMemoryBytes / 1e6).toFixed(0)} | ${loadavg()[0].toFixed(1)} |`
		);
	}
}
console.log(lines.join('\n'));
