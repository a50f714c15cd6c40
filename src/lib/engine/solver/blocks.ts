/**
 * Block files for block minimization: one sequential pass splits a binary row file into
 * consecutive blocks that each fit a byte budget in RAM, written as raw typed arrays,
 * optionally compressed with node:zlib (less disk traffic for more CPU, as in Yu et al., KDD 2010).
 * Block file layout (little-endian): f64 n, f64 nnz, f64 hasValues, i8 labels × n padded to 8,
 * f64 rowPtr × (n+1), u32 indices × nnz, f32 values × nnz (when hasValues); compressed blocks
 * hold the same bytes as gzip members, one per section.
 */
import { closeSync, mkdtempSync, openSync, readFileSync, rmSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { gunzipSync, gzipSync } from 'node:zlib';
import type { SparseRows } from '../types.js';
import { readBinaryChunks, readBinaryHeader } from '../data/binary.js';
import { Throttle } from '../data/throttle.js';
import { sliceRows, workingSetBytes } from './rows.js';

export interface BlockFile {
	path: string;
	/** global index of the first row */
	start: number;
	n: number;
	nnz: number;
	/** bytes on disk (compressed when compression is on) */
	diskBytes: number;
	/** RAM the block takes once loaded */
	memoryBytes: number;
}

export interface BlockSet {
	dir: string;
	blocks: BlockFile[];
	compress: boolean;
	/** a temporary folder we made and remove in dispose() */
	owned: boolean;
	dispose(): void;
}

const pad8 = (x: number) => (x + 7) & ~7;

/**
 * Write the rows of `parts` as one block file, section by section, so the only extra RAM is one
 * part's row pointers; compressed blocks are one gzip member per section (gunzip joins them).
 */
function writeBlock(path: string, parts: SparseRows[], real: boolean, compress: boolean): { n: number; nnz: number; diskBytes: number } {
	let n = 0;
	let nnz = 0;
	for (const p of parts) {
		n += p.n;
		nnz += p.rowPtr[p.n];
	}
	const fd = openSync(path, 'w');
	let diskBytes = 0;
	const put = (bytes: Uint8Array) => {
		const out = compress ? gzipSync(bytes, { level: 1 }) : bytes;
		let done = 0;
		while (done < out.length) done += writeSync(fd, out, done, out.length - done);
		diskBytes += out.length;
	};
	const view = (a: ArrayBufferView) => new Uint8Array(a.buffer, a.byteOffset, a.byteLength);
	try {
		put(view(Float64Array.of(n, nnz, real ? 1 : 0)));
		for (const p of parts) put(view(p.labels.subarray(0, p.n)));
		if (pad8(n) > n) put(new Uint8Array(pad8(n) - n));
		put(view(Float64Array.of(0)));
		let offset = 0;
		for (const p of parts) {
			const ptr = new Float64Array(p.n);
			for (let i = 0; i < p.n; i++) ptr[i] = offset + p.rowPtr[i + 1];
			offset += p.rowPtr[p.n];
			put(view(ptr));
		}
		for (const p of parts) put(view(p.indices.subarray(p.rowPtr[0], p.rowPtr[p.n])));
		if (real) for (const p of parts) put(view(p.values ? p.values.subarray(p.rowPtr[0], p.rowPtr[p.n]) : new Float32Array(p.rowPtr[p.n]).fill(1)));
	} finally {
		closeSync(fd);
	}
	return { n, nnz, diskBytes };
}

function decodeBlock(raw: Uint8Array, d: number): SparseRows {
	// typed views need aligned addresses; a pooled or inflated buffer may not start on one
	const buf = raw.byteOffset % 8 === 0 ? raw : raw.slice();
	const head = new Float64Array(buf.buffer, buf.byteOffset, 3);
	const n = head[0];
	const nnz = head[1];
	let p = buf.byteOffset + 24;
	const labels = new Int8Array(buf.buffer, p, n);
	p += pad8(n);
	const rowPtr = new Float64Array(buf.buffer, p, n + 1);
	p += 8 * (n + 1);
	const indices = new Uint32Array(buf.buffer, p, nnz);
	p += 4 * nnz;
	const values = head[2] === 1 ? new Float32Array(buf.buffer, p, nnz) : null;
	return { n, d, labels, rowPtr, indices, values };
}

/**
 * The preparation pass: read `data` once, strictly sequentially, and write blocks whose
 * working sets stay within `blockBudget` bytes. Reads and writes go through one throttle (one emulated disk).
 */
export async function prepareBlocks(
	data: string,
	d: number,
	blockBudget: number,
	opts: { compress: boolean; throttle: Throttle; workDir?: string; diskMBps?: number; chunkBytes?: number }
): Promise<BlockSet> {
	const owned = opts.workDir === undefined;
	const dir = opts.workDir ?? mkdtempSync(join(tmpdir(), 'loadline-blocks-'));
	const blocks: BlockFile[] = [];
	let pending: SparseRows[] = [];
	let pendingN = 0;
	let pendingNnz = 0;
	let real = false;
	let next = 0;
	const header = await readBinaryHeader(data);
	real = header.valueKind === 'real';
	const flush = async () => {
		if (pendingN === 0) return;
		const path = join(dir, `block-${blocks.length}.bin`);
		const b = writeBlock(path, pending, real, opts.compress);
		await opts.throttle.take(b.diskBytes);
		blocks.push({ path, start: next, n: b.n, nnz: b.nnz, diskBytes: b.diskBytes, memoryBytes: workingSetBytes(b.n, b.nnz, real) });
		next += b.n;
		pending = [];
		pendingN = 0;
		pendingNnz = 0;
	};
	// the reader throttles its own reads at the same rate
	for await (const chunk of readBinaryChunks(data, { throttleMBps: opts.diskMBps, chunkBytes: opts.chunkBytes })) {
		const rows = chunk.rows;
		let from = 0;
		while (from < rows.n) {
			// take as many rows of this chunk as still fit the block
			let to = from;
			while (to < rows.n && workingSetBytes(pendingN + (to - from) + 1, pendingNnz + (rows.rowPtr[to + 1] - rows.rowPtr[from]), real) <= blockBudget) to++;
			if (to === from) {
				if (pendingN === 0) throw new RangeError(`memoryBytes: row ${chunk.firstRow + from} alone needs more than the ${blockBudget} bytes left for a block`);
				await flush();
				continue;
			}
			pending.push(from === 0 && to === rows.n ? rows : sliceRows(rows, from, to));
			pendingN += to - from;
			pendingNnz += rows.rowPtr[to] - rows.rowPtr[from];
			from = to;
		}
	}
	await flush();
	return {
		dir,
		blocks,
		compress: opts.compress,
		owned,
		dispose: () => {
			if (owned) rmSync(dir, { recursive: true, force: true });
			else for (const b of blocks) rmSync(b.path, { force: true });
		}
	};
}

/**
 * Read one block back into RAM, through the throttle in `chunkBytes` requests, as a sequential reader of the
 * emulated disk would: one request for the whole block would let the throttle's one-request
 * readahead prefetch an entire block during the previous block's compute, hiding reads a real disk
 * cannot hide.
 */
export async function loadBlock(set: BlockSet, b: BlockFile, d: number, throttle: Throttle, chunkBytes: number): Promise<SparseRows> {
	for (let at = 0; at < b.diskBytes; at += chunkBytes) await throttle.take(Math.min(chunkBytes, b.diskBytes - at));
	const raw = readFileSync(b.path);
	const bytes = set.compress ? gunzipSync(raw) : new Uint8Array(raw.buffer, raw.byteOffset, raw.byteLength);
	return decodeBlock(bytes, d);
}
