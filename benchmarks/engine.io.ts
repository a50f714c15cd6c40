/**
 * Reading and parsing benchmark: svmlight text parsing against liblinear's own load time of the
 * same file, and the binary row reader from the page cache.
 *
 * Run: npx tsx benchmarks/engine.io.ts [--sets 1m50,200k500] [--repeat 3] [--no-liblinear]
 * Data is generated into benchmarks/data/ (git-ignored) on first use and kept.
 * Prints a markdown section for benchmarks/results/engine.md.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, statSync } from 'node:fs';
import { open } from 'node:fs/promises';
import { cpus } from 'node:os';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { generateToFile, type GenerateOptions } from '../src/lib/engine/data/generate.js';
import { convertSvmlightToBinary } from '../src/lib/engine/data/convert.js';
import { parseSvmlightFile } from '../src/lib/engine/data/svmlight.js';
import { loadBinary, readBinaryChunkViews, readBinaryChunks, readBinaryHeader } from '../src/lib/engine/data/binary.js';

const { values: flags } = parseArgs({
	options: {
		sets: { type: 'string', default: '1m50,200k500' },
		repeat: { type: 'string', default: '3' },
		'no-liblinear': { type: 'boolean', default: false }
	}
});

const SETS: Record<string, Partial<GenerateOptions>> = {
	'1m50': { rows: 1_000_000, features: 1_000_000, nnz: 50, values: 'binary', seed: 1 },
	'200k500': { rows: 200_000, features: 1_000_000, nnz: 500, values: 'real', seed: 2 }
};

const dataDir = join(import.meta.dirname, 'data');
const repeat = Number(flags.repeat);
const MB = 1e6;

const seconds = (t0: number) => (performance.now() - t0) / 1000;

async function best<T>(label: string, run: () => Promise<T>): Promise<{ s: number; all: number[]; result: T }> {
	const all: number[] = [];
	let result!: T;
	for (let i = 0; i < repeat; i++) {
		const t0 = performance.now();
		result = await run();
		all.push(seconds(t0));
		process.stderr.write(`  ${label}: ${all[i].toFixed(3)} s\n`);
	}
	return { s: Math.min(...all), all, result };
}

/** Pull the file into the page cache, so every reader below starts from memory. */
async function warm(path: string) {
	const fh = await open(path, 'r');
	const buf = new Uint8Array(8 << 20);
	while ((await fh.read(buf, 0, buf.length, null)).bytesRead > 0);
	await fh.close();
}

async function rawRead(path: string): Promise<number> {
	const fh = await open(path, 'r');
	const buf = new Uint8Array(8 << 20);
	let total = 0;
	let r;
	while ((r = await fh.read(buf, 0, buf.length, null)).bytesRead > 0) total += r.bytesRead;
	await fh.close();
	return total;
}

/** Decode chunk views into preallocated slot arrays, as a bounded in-RAM cache would. */
async function decodeIntoSlots(path: string): Promise<number> {
	const h = await readBinaryHeader(path);
	const slotNnz = 1 << 24;
	const indices = new Uint32Array(slotNnz);
	const values = h.valueKind === 'real' ? new Float32Array(slotNnz) : null;
	const labels = new Int8Array(1 << 20);
	const rowPtr = new Float64Array((1 << 20) + 1);
	let at = 0;
	let row = 0;
	let rows = 0;
	for await (const c of readBinaryChunkViews(path)) {
		if (at + c.indices.length > slotNnz) at = 0;
		if (row + c.rows > labels.length) row = 0;
		indices.set(c.indices, at);
		if (values && c.values) values.set(c.values, at);
		labels.set(c.labels, row);
		let p = at;
		for (let i = 0; i < c.rows; i++) {
			p += c.lengths[i];
			rowPtr[row + i + 1] = p;
		}
		at = p;
		row += c.rows;
		rows += c.rows;
	}
	return rows;
}

/** liblinear-train's load time: dual CD with tolerance 1e30 stops after one pass, right after loading. */
function liblinearLoad(path: string): number {
	const t0 = performance.now();
	const r = spawnSync('/usr/bin/liblinear-train', ['-q', '-s', '1', '-e', '1e30', path, '/tmp/loadline-bench.model'], { stdio: 'ignore' });
	if (r.status !== 0) throw new Error(`liblinear-train failed on ${path}`);
	return seconds(t0);
}

async function main() {
	mkdirSync(dataDir, { recursive: true });
	const lines: string[] = [];
	const cpu = execFileSync('lscpu', { encoding: 'utf8' }).match(/Model name:\s*(.+)/)?.[1]?.trim() ?? cpus()[0].model;
	const load = execFileSync('cat', ['/proc/loadavg'], { encoding: 'utf8' }).split(' ').slice(0, 3).join(' ');
	lines.push(`Machine: ${cpu}, ${cpus().length} cores; Node ${process.version}; ${new Date().toISOString().slice(0, 16).replace('T', ' ')} UTC; load average at start ${load}.`);
	lines.push(`Command: \`npx tsx benchmarks/engine.io.ts --sets ${flags.sets} --repeat ${repeat}\` (best of ${repeat}; page cache warm).`);
	lines.push('');
	lines.push('| data | text MB | parse s | parse MB/s | liblinear load s | liblinear MB/s | ratio | binary MB | raw read GB/s | decode into slots GB/s | chunks to SparseRows GB/s | loadBinary GB/s |');
	lines.push('|---|---|---|---|---|---|---|---|---|---|---|---|');
	for (const name of flags.sets!.split(',')) {
		const opts = SETS[name];
		if (!opts) throw new Error(`unknown set ${name}; known: ${Object.keys(SETS).join(', ')}`);
		const svm = join(dataDir, `io-${name}.svm`);
		const bin = join(dataDir, `io-${name}.bin`);
		if (!existsSync(svm)) {
			process.stderr.write(`generating ${svm}\n`);
			const t0 = performance.now();
			await generateToFile(opts, svm, 'svm');
			process.stderr.write(`  generated in ${seconds(t0).toFixed(1)} s\n`);
		}
		if (!existsSync(bin)) {
			process.stderr.write(`converting to ${bin}\n`);
			const t0 = performance.now();
			await convertSvmlightToBinary(svm, bin);
			process.stderr.write(`  converted in ${seconds(t0).toFixed(1)} s\n`);
		}
		const textBytes = statSync(svm).size;
		const binBytes = statSync(bin).size;
		await warm(svm);
		const parse = await best(`${name} parse`, () => parseSvmlightFile(svm));
		let lib = NaN;
		if (!flags['no-liblinear'] && existsSync('/usr/bin/liblinear-train')) {
			const times: number[] = [];
			for (let i = 0; i < Math.min(2, repeat); i++) {
				times.push(liblinearLoad(svm));
				process.stderr.write(`  ${name} liblinear load: ${times[i].toFixed(3)} s\n`);
			}
			lib = Math.min(...times);
		}
		await warm(bin);
		const raw = await best(`${name} raw read`, () => rawRead(bin));
		const slots = await best(`${name} decode into slots`, () => decodeIntoSlots(bin));
		const chunks = await best(`${name} readBinaryChunks`, async () => {
			let n = 0;
			for await (const c of readBinaryChunks(bin)) n += c.rows.n;
			return n;
		});
		const loaded = await best(`${name} loadBinary`, async () => (await loadBinary(bin)).n);
		const gbps = (s: number) => (binBytes / 1e9 / s).toFixed(2);
		lines.push(
			`| ${name} (${parse.result.rows} rows × ${parse.result.nnzMean.toFixed(1)} nnz, ${parse.result.valueKind}) | ${(textBytes / MB).toFixed(0)} | ${parse.s.toFixed(2)} | ${(textBytes / MB / parse.s).toFixed(0)} | ${lib.toFixed(2)} | ${(textBytes / MB / lib).toFixed(0)} | ${(lib / parse.s).toFixed(1)}× | ${(binBytes / MB).toFixed(0)} | ${gbps(raw.s)} | ${gbps(slots.s)} | ${gbps(chunks.s)} | ${gbps(loaded.s)} |`
		);
		if (slots.result !== parse.result.rows || chunks.result !== parse.result.rows || loaded.result !== parse.result.rows) throw new Error(`${name}: readers disagree on the row count`);
	}
	console.log(lines.join('\n'));
}

main().catch((err) => {
	console.error(err instanceof Error ? err.message : err);
	process.exit(1);
});
