import { afterAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, writeFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import {
	BinaryRowWriter,
	chunkRecordBytes,
	loadBinary,
	parseChunk,
	readBinaryChunks,
	readBinaryChunkViews,
	readBinaryHeader
} from '../../../../src/lib/engine/data/binary.js';
import type { SparseRows } from '../../../../src/lib/engine/types.js';

const dir = mkdtempSync(join(tmpdir(), 'loadline-bin-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Rows with lengths 0..6 cycling, so chunk records have odd label counts (padding) and empty rows. */
function sampleRows(n: number, real: boolean): { label: number; idx: number[]; val: number[] }[] {
	const rows = [];
	for (let i = 0; i < n; i++) {
		const len = i % 7;
		const idx = Array.from({ length: len }, (_, j) => i + j * 13);
		rows.push({ label: i % 3 === 0 ? 1 : -1, idx, val: idx.map((x) => (real ? (x % 11) / 8 - 0.5 : 1)) });
	}
	return rows;
}

async function writeSample(name: string, n: number, real: boolean, chunkRows: number) {
	const path = join(dir, name);
	const rows = sampleRows(n, real);
	const w = BinaryRowWriter.open(path, { d: 10, valueKind: real ? 'real' : 'binary', chunkRows });
	for (const r of rows) w.writeRow(r.label, r.idx, real ? r.val : null);
	const header = await w.close();
	return { path, rows, header };
}

function rowsOf(s: SparseRows) {
	const out = [];
	for (let i = 0; i < s.n; i++) {
		const lo = s.rowPtr[i];
		const hi = s.rowPtr[i + 1];
		out.push({ label: s.labels[i], idx: Array.from(s.indices.subarray(lo, hi)), val: s.values ? Array.from(s.values.subarray(lo, hi)) : Array(hi - lo).fill(1) });
	}
	return out;
}

// The layout checked here is the one documented in binary.ts and DEVELOPERS.md (our own format).
describe('binary row format', () => {
	it('header fields: magic, version, n, d, nnz, value kind, chunk size, patched at close', async () => {
		const { path, rows, header } = await writeSample('h.bin', 101, true, 10);
		const nnz = rows.reduce((s, r) => s + r.idx.length, 0);
		const maxIndex = Math.max(...rows.flatMap((r) => r.idx));
		const read = await readBinaryHeader(path);
		expect(read).toEqual(header);
		expect(read).toMatchObject({ version: 1, n: 101, d: maxIndex + 1, nnz, valueKind: 'real', chunkRows: 10, headerBytes: 64, chunks: 11 });
		const raw = readFileSync(path);
		expect(raw.subarray(0, 8).toString('latin1')).toBe('LLROWS\0\0');
		expect(raw.readUInt32LE(8)).toBe(1);
		expect(raw.readUInt32LE(12)).toBe(1);
		expect(Number(raw.readBigUInt64LE(32))).toBe(101);
		expect(Number(raw.readBigUInt64LE(48))).toBe(nnz);
		// first record: 10 rows, labels padded from 10 to 12 bytes
		expect(raw.readUInt32LE(64)).toBe(10);
		const firstNnz = rows.slice(0, 10).reduce((s, r) => s + r.idx.length, 0);
		expect(raw.readUInt32LE(68)).toBe(firstNnz);
		expect(chunkRecordBytes(10, firstNnz, 'real')).toBe(8 + 12 + 40 + 8 * firstNnz);
		expect(raw.length).toBe(read.indexOffset + 16 * read.chunks);
	});

	it('d given at open is kept when larger than the indices need', async () => {
		const path = join(dir, 'd.bin');
		const w = BinaryRowWriter.open(path, { d: 500, valueKind: 'binary' });
		w.writeRow(1, [3], null);
		expect((await w.close()).d).toBe(500);
	});

	it('loadBinary returns the rows written, binary and real', async () => {
		for (const real of [false, true]) {
			const { path, rows } = await writeSample(`l${real}.bin`, 257, real, 16);
			const loaded = await loadBinary(path);
			expect(loaded.values === null).toBe(!real);
			expect(rowsOf(loaded)).toEqual(rows.map((r) => ({ ...r, val: r.val.map((v) => Math.fround(v)) })));
		}
	});

	it('parseChunk gives aligned zero-copy views, null on a partial record, a copy when misaligned', async () => {
		const { path, header } = await writeSample('p.bin', 30, true, 7);
		const file = new Uint8Array(readFileSync(path));
		const buf = new Uint8Array(new ArrayBuffer(file.length));
		buf.set(file);
		const c = parseChunk(buf, header.headerBytes, header)!;
		expect(c.rows).toBe(7);
		expect(c.labels.buffer).toBe(buf.buffer);
		expect(c.indices.buffer).toBe(buf.buffer);
		expect(c.indices.byteOffset % 4).toBe(0);
		expect(c.lengths.byteOffset % 4).toBe(0);
		expect(c.values!.byteOffset % 4).toBe(0);
		const second = parseChunk(buf, c.nextOffset, header)!;
		expect(second.indices.byteOffset % 4).toBe(0);
		expect(parseChunk(buf.subarray(0, c.nextOffset - 1), header.headerBytes, header)).toBeNull();
		expect(parseChunk(buf.subarray(0, header.headerBytes + 5), header.headerBytes, header)).toBeNull();
		const shifted = new Uint8Array(file.length + 1);
		shifted.set(file, 1);
		const m = parseChunk(shifted, header.headerBytes + 1, header)!;
		expect(m.indices.buffer).not.toBe(shifted.buffer);
		expect(Array.from(m.indices)).toEqual(Array.from(c.indices));
		expect(m.nextOffset).toBe(c.nextOffset + 1);
	});

	it('readBinaryChunks reads strictly sequentially and covers every row', async () => {
		const { path, rows, header } = await writeSample('s.bin', 1000, true, 32);
		const reads: [number, number][] = [];
		const got = [];
		let nextRow = 0;
		for await (const c of readBinaryChunks(path, { chunkBytes: 4096, onRead: (o, b) => reads.push([o, b]) })) {
			expect(c.firstRow).toBe(nextRow);
			nextRow += c.rows.n;
			got.push(...rowsOf(c.rows));
		}
		expect(got).toEqual(rows.map((r) => ({ ...r, val: r.val.map((v) => Math.fround(v)) })));
		expect(reads[0][0]).toBe(header.headerBytes);
		for (let i = 1; i < reads.length; i++) expect(reads[i][0]).toBe(reads[i - 1][0] + reads[i - 1][1]);
		const last = reads[reads.length - 1];
		expect(last[0] + last[1]).toBe((await readBinaryHeader(path)).indexOffset);
		expect(Math.max(...reads.map((r) => r[1]))).toBeLessThanOrEqual(4096);
	});

	it('yielded rows stay valid after later chunks are read', async () => {
		const { path } = await writeSample('k.bin', 200, false, 8);
		const kept: SparseRows[] = [];
		for await (const c of readBinaryChunks(path, { chunkBytes: 4096 })) kept.push(c.rows);
		const again = await loadBinary(path);
		expect(kept.flatMap(rowsOf)).toEqual(rowsOf(again));
	});

	it('a consumer may stop early while the next read is in flight', async () => {
		const { path } = await writeSample('e.bin', 2000, true, 16);
		const reads: number[] = [];
		let seen = 0;
		for await (const c of readBinaryChunkViews(path, { chunkBytes: 4096, onRead: (o) => reads.push(o) })) {
			seen += c.rows;
			if (seen >= 32) break;
		}
		expect(seen).toBe(32);
		// the first buffer plus at most one read ahead
		expect(reads.length).toBeLessThanOrEqual(2);
	});

	it('startRow begins mid-chunk at exactly that row', async () => {
		const { path, rows } = await writeSample('r.bin', 100, true, 8);
		const got = [];
		let first = -1;
		for await (const c of readBinaryChunks(path, { startRow: 37 })) {
			if (first < 0) first = c.firstRow;
			got.push(...rowsOf(c.rows));
		}
		expect(first).toBe(37);
		expect(got).toEqual(rows.slice(37).map((r) => ({ ...r, val: r.val.map((v) => Math.fround(v)) })));
	});

	it('a record larger than the read size is still read whole', async () => {
		const path = join(dir, 'big.bin');
		const w = BinaryRowWriter.open(path, { valueKind: 'binary', chunkRows: 4 });
		const idx = Array.from({ length: 5000 }, (_, j) => j * 2);
		for (let i = 0; i < 6; i++) w.writeRow(1, idx, null);
		await w.close();
		let n = 0;
		for await (const c of readBinaryChunks(path, { chunkBytes: 4096 })) n += c.rows.n;
		expect(n).toBe(6);
	});

	it('refuses foreign, incomplete and truncated files with a message', async () => {
		const foreign = join(dir, 'foreign.bin');
		writeFileSync(foreign, '+1 1:1\n'.repeat(20));
		await expect(readBinaryHeader(foreign)).rejects.toThrow('not a Loadline binary row file (no "LLROWS" magic at its start)');
		const path = join(dir, 'open.bin');
		const w = BinaryRowWriter.open(path, { valueKind: 'binary' });
		w.writeRow(1, [1], null);
		await expect(readBinaryHeader(path)).rejects.toThrow('file is incomplete (its writer never closed it)');
		w.abort();
		const { path: whole } = await writeSample('t.bin', 50, false, 8);
		const cut = join(dir, 'cut.bin');
		writeFileSync(cut, readFileSync(whole).subarray(0, 200));
		await expect(readBinaryHeader(cut)).rejects.toThrow('(truncated or damaged)');
	});

	it('the writer refuses bad rows, naming the row', async () => {
		const w = BinaryRowWriter.open(join(dir, 'bad.bin'), { valueKind: 'binary' });
		expect(() => w.writeRow(2, [1], null)).toThrow('row 0: label 2 is not +1 or -1');
		expect(() => w.writeRow(1, [3, 3], null)).toThrow('row 0: feature index 3 is not a whole number above the previous index 3');
		expect(() => w.writeRow(1, [1], [0.5])).toThrow('row 0: value 0.5 in a binary-valued file');
		w.abort();
	});
});
