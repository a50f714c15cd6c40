/**
 * Block files for block minimization: one sequential pass splits a binary row file into
 * consecutive blocks that each fit a byte budget in RAM, written as raw typed arrays,
 * optionally deflated with node:zlib (less disk traffic for more CPU, as in Yu et al., KDD 2010).
 * Block file layout (little-endian): f64 n, f64 nnz, f64 hasValues, i8 labels × n padded to 8,
 * f64 rowPtr × (n+1), u32 indices × nnz, f32 values × nnz (when hasValues).
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { deflateSync, inflateSync } from 'node:zlib';
import type { SparseRows } from '../types.js';
import { readBinaryChunks } from '../data/binary.js';
import { Throttle } from '../data/throttle.js';
import { joinRows, rowsBytes, sliceRows, workingSetBytes } from './rows.js';

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

function encodeBlock(rows: SparseRows): Uint8Array {
	const nnz = rows.rowPtr[rows.n];
	const labelBytes = pad8(rows.n);
	const total = 24 + labelBytes + 8 * (rows.n + 1) + 4 * nnz + (rows.values ? 4 * nnz : 0);
	const buf = new Uint8Array(total);
	const head = new Float64Array(buf.buffer, 0, 3);
	head[0] = rows.n;
	head[1] = nnz;
	head[2] = rows.values ? 1 : 0;
	let p = 24;
	buf.set(new Uint8Array(rows.labels.buffer, rows.labels.byteOffset, rows.n), p);
	p += labelBytes;
	new Float64Array(buf.buffer, p, rows.n + 1).set(rows.rowPtr);
	p += 8 * (rows.n + 1);
	new Uint32Array(buf.buffer, p, nnz).set(rows.indices.subarray(0, nnz));
	p += 4 * nnz;
	if (rows.values) new Float32Array(buf.buffer, p, nnz).set(rows.values.subarray(0, nnz));
	return buf;
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
	opts: { compress: boolean; throttle: Throttle; workDir?: string; diskMBps?: number }
): Promise<BlockSet> {
	const owned = opts.workDir === undefined;
	const dir = opts.workDir ?? mkdtempSync(join(tmpdir(), 'loadline-blocks-'));
	const blocks: BlockFile[] = [];
	let pending: SparseRows[] = [];
	let pendingN = 0;
	let pendingNnz = 0;
	let real = false;
	let next = 0;
	const flush = async () => {
		if (pendingN === 0) return;
		const rows = pending.length === 1 ? pending[0] : joinRows(pending, d);
		const bytes = encodeBlock(rows);
		const out = opts.compress ? deflateSync(bytes, { level: 1 }) : bytes;
		const path = join(dir, `block-${blocks.length}.bin`);
		await opts.throttle.take(out.length);
		writeFileSync(path, out);
		blocks.push({ path, start: next, n: rows.n, nnz: rows.rowPtr[rows.n], diskBytes: out.length, memoryBytes: rowsBytes(rows) });
		next += rows.n;
		pending = [];
		pendingN = 0;
		pendingNnz = 0;
	};
	// the reader throttles its own reads at the same rate
	for await (const chunk of readBinaryChunks(data, { throttleMBps: opts.diskMBps })) {
		const rows = chunk.rows;
		real = rows.values !== null;
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

/** Read one block back into RAM (through the throttle). */
export async function loadBlock(set: BlockSet, b: BlockFile, d: number, throttle: Throttle): Promise<SparseRows> {
	await throttle.take(b.diskBytes);
	const raw = readFileSync(b.path);
	const bytes = set.compress ? inflateSync(raw) : new Uint8Array(raw.buffer, raw.byteOffset, raw.byteLength);
	return decodeBlock(bytes, d);
}
