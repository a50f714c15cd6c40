/** Unthrottled decode throughput: binary rows, text rows, gunzip (MB/s of uncompressed bytes). */
import { readFileSync, statSync } from 'node:fs';
import { gunzipSync, gzipSync } from 'node:zlib';
import { loadBinary } from '../data/binary.js';
import { parseSvmlightFile } from '../data/svmlight.js';

async function bestSeconds(f: () => Promise<unknown> | unknown, repeats = 2): Promise<number> {
	let best = Infinity;
	for (let i = 0; i < repeats; i++) {
		const t = performance.now();
		await f();
		best = Math.min(best, (performance.now() - t) / 1000);
	}
	return Math.max(best, 1e-6);
}

export async function measureDecode(binaryPath: string, textPath: string): Promise<{ binaryMBps: number; textMBps: number; gunzipMBps: number }> {
	const binBytes = statSync(binaryPath).size;
	const textBytes = statSync(textPath).size;
	// a file of a few MB loads in milliseconds and the first loads run before the compiler has warmed up
	// (measured: 0.3 → 2–3 GB/s over eight loads of a 10 MB file): the best of many is the rate of a long run
	const binaryMBps = binBytes / (await bestSeconds(() => loadBinary(binaryPath), 12)) / 1e6;
	const textMBps = textBytes / (await bestSeconds(() => parseSvmlightFile(textPath), 4)) / 1e6;
	const zipped = gzipSync(readFileSync(textPath), { level: 6 });
	const gunzipMBps = textBytes / (await bestSeconds(() => gunzipSync(zipped))) / 1e6;
	return { binaryMBps, textMBps, gunzipMBps };
}
