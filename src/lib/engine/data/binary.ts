/**
 * Loadline binary row format, version 1: sparse labelled rows in chunks that a
 * reader can decode with zero-copy typed-array views and read strictly sequentially.
 *
 * All integers are little-endian. Every record starts at a file offset that is a
 * multiple of 4, so u32/f32 views into a read buffer that starts on a record are aligned.
 *
 * Header (64 bytes, at offset 0):
 *   off  size  field
 *     0     8  magic "LLROWS\0\0"
 *     8     4  u32 version = 1
 *    12     4  u32 valueKind: 0 = binary (no values stored, every value is 1), 1 = real (f32 values)
 *    16     4  u32 chunkRows: rows per chunk (every chunk but the last holds exactly this many,
 *               unless a chunk reached MAX_CHUNK_NNZ nonzeros first)
 *    20     4  u32 headerBytes = 64 (records start here)
 *    24     4  u32 state: 0 = still being written, 1 = complete (set by the writer's close)
 *    28     4  u32 chunks: number of chunk records
 *    32     8  u64 n: rows
 *    40     8  u64 d: feature dimension (largest 0-based index + 1, or more if the writer was told so)
 *    48     8  u64 nnz: stored nonzeros over all rows
 *    56     8  u64 indexOffset: file offset of the chunk index (= end of the chunk records)
 *
 * Chunk record (repeated `chunks` times, from offset headerBytes):
 *   u32 rows r (≥ 1), u32 nnz m of this chunk,
 *   i8 labels × r (+1 / -1), zero-padded to a multiple of 4 bytes,
 *   u32 row lengths × r,
 *   u32 feature indices × m (0-based, ascending within a row),
 *   f32 values × m (real data only; omitted for binary data).
 *   Record bytes = 8 + pad4(r) + 4r + 4m (+ 4m for real data).
 *
 * Chunk index (at indexOffset, after the last record; read only to start mid-file):
 *   per chunk: u64 file offset of its record, u64 0-based number of its first row.
 */
import { open, type FileHandle } from 'node:fs/promises';
import { openSync, writeSync, closeSync, fstatSync } from 'node:fs';
import { endianness } from 'node:os';
import type { SparseRows, ValueKind } from '../types.js';
import { Throttle } from './throttle.js';

export const BINARY_MAGIC = 'LLROWS';
export const BINARY_VERSION = 1;
export const HEADER_BYTES = 64;
export const DEFAULT_CHUNK_ROWS = 1024;
/** a chunk is closed early at this many nonzeros so one record stays a bounded read */
export const MAX_CHUNK_NNZ = 1 << 22;
const DEFAULT_READ_BYTES = 8 << 20;
const INDEX_ENTRY_BYTES = 16;

if (endianness() !== 'LE') throw new Error('the Loadline binary row reader needs a little-endian machine');

export interface BinaryHeader {
	version: number;
	n: number;
	d: number;
	nnz: number;
	valueKind: ValueKind;
	chunkRows: number;
	headerBytes: number;
}

/** Header plus the fields only the reader needs. */
export interface BinaryFileHeader extends BinaryHeader {
	chunks: number;
	indexOffset: number;
}

export class BinaryFormatError extends Error {}

const pad4 = (x: number) => (x + 3) & ~3;
const readU32 = (b: Uint8Array, at: number) => (b[at] | (b[at + 1] << 8) | (b[at + 2] << 16) | (b[at + 3] << 24)) >>> 0;

/** Bytes of one chunk record. */
export function chunkRecordBytes(rows: number, nnz: number, valueKind: ValueKind): number {
	return 8 + pad4(rows) + 4 * rows + 4 * nnz * (valueKind === 'real' ? 2 : 1);
}

function encodeHeader(h: BinaryFileHeader, complete: boolean): Uint8Array {
	const bytes = new Uint8Array(HEADER_BYTES);
	const v = new DataView(bytes.buffer);
	for (let i = 0; i < BINARY_MAGIC.length; i++) bytes[i] = BINARY_MAGIC.charCodeAt(i);
	v.setUint32(8, h.version, true);
	v.setUint32(12, h.valueKind === 'real' ? 1 : 0, true);
	v.setUint32(16, h.chunkRows, true);
	v.setUint32(20, h.headerBytes, true);
	v.setUint32(24, complete ? 1 : 0, true);
	v.setUint32(28, h.chunks, true);
	v.setBigUint64(32, BigInt(h.n), true);
	v.setBigUint64(40, BigInt(h.d), true);
	v.setBigUint64(48, BigInt(h.nnz), true);
	v.setBigUint64(56, BigInt(h.indexOffset), true);
	return bytes;
}

function decodeHeader(bytes: Uint8Array, path: string, fileBytes: number): BinaryFileHeader {
	const where = `${path}: not a Loadline binary row file`;
	if (bytes.length < HEADER_BYTES) throw new BinaryFormatError(`${where} (shorter than its ${HEADER_BYTES}-byte header)`);
	for (let i = 0; i < 8; i++) {
		const want = i < BINARY_MAGIC.length ? BINARY_MAGIC.charCodeAt(i) : 0;
		if (bytes[i] !== want) throw new BinaryFormatError(`${where} (no "${BINARY_MAGIC}" magic at its start)`);
	}
	const v = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
	const version = v.getUint32(8, true);
	if (version !== BINARY_VERSION) throw new BinaryFormatError(`${path}: binary row format version ${version}; this reader knows version ${BINARY_VERSION}`);
	const kind = v.getUint32(12, true);
	if (kind > 1) throw new BinaryFormatError(`${path}: header valueKind ${kind} is neither 0 (binary) nor 1 (real)`);
	if (v.getUint32(24, true) !== 1) throw new BinaryFormatError(`${path}: file is incomplete (its writer never closed it)`);
	const h: BinaryFileHeader = {
		version,
		valueKind: kind === 1 ? 'real' : 'binary',
		chunkRows: v.getUint32(16, true),
		headerBytes: v.getUint32(20, true),
		chunks: v.getUint32(28, true),
		n: Number(v.getBigUint64(32, true)),
		d: Number(v.getBigUint64(40, true)),
		nnz: Number(v.getBigUint64(48, true)),
		indexOffset: Number(v.getBigUint64(56, true))
	};
	if (h.headerBytes < HEADER_BYTES || h.headerBytes % 4 !== 0) throw new BinaryFormatError(`${path}: header size ${h.headerBytes} is not a multiple of 4 of at least ${HEADER_BYTES}`);
	if (h.chunkRows < 1) throw new BinaryFormatError(`${path}: header chunkRows is 0`);
	if (h.indexOffset + h.chunks * INDEX_ENTRY_BYTES !== fileBytes) {
		throw new BinaryFormatError(`${path}: file is ${fileBytes} bytes but its header describes ${h.indexOffset + h.chunks * INDEX_ENTRY_BYTES} (truncated or damaged)`);
	}
	return h;
}

async function readHeaderFrom(fh: FileHandle, path: string): Promise<BinaryFileHeader> {
	const bytes = new Uint8Array(HEADER_BYTES);
	const { bytesRead } = await fh.read(bytes, 0, HEADER_BYTES, 0);
	const { size } = await fh.stat();
	return decodeHeader(bytes.subarray(0, bytesRead), path, size);
}

/** Header of a binary row file, with `chunks` and `indexOffset` as extra fields. */
export async function readBinaryHeader(path: string): Promise<BinaryFileHeader> {
	const fh = await open(path, 'r');
	try {
		return await readHeaderFrom(fh, path);
	} finally {
		await fh.close();
	}
}

export interface BinaryWriterOptions {
	/** feature dimension; raised at close to the largest index + 1 seen */
	d?: number;
	valueKind: ValueKind;
	/** rows per chunk; default 1024 */
	chunkRows?: number;
}

/**
 * Streaming writer: holds one chunk and one output buffer, never the dataset.
 * Writes are synchronous so writeRow needs no await; close() patches n, d, nnz into the header.
 */
export class BinaryRowWriter {
	private fd: number;
	private readonly real: boolean;
	private readonly chunkRows: number;
	private d: number;
	private n = 0;
	private nnz = 0;
	private filePos = HEADER_BYTES;
	private closed = false;
	// current chunk
	private rows = 0;
	private chunkNnz = 0;
	private labels: Int8Array;
	private lengths: Uint32Array;
	private indices: Uint32Array;
	private values: Float32Array;
	// output buffer (records are multiples of 4 bytes, so typed views into it stay aligned)
	private out = new Uint8Array(DEFAULT_READ_BYTES);
	private outLen = 0;
	private index: number[] = [];

	private constructor(
		private readonly path: string,
		opts: BinaryWriterOptions
	) {
		const chunkRows = opts.chunkRows ?? DEFAULT_CHUNK_ROWS;
		if (!Number.isInteger(chunkRows) || chunkRows < 1 || chunkRows > 1 << 24) throw new RangeError(`chunkRows must be a whole number from 1 to ${1 << 24}, got ${chunkRows}`);
		const d = opts.d ?? 0;
		if (!Number.isInteger(d) || d < 0) throw new RangeError(`d must be a whole number ≥ 0, got ${d}`);
		if (opts.valueKind !== 'binary' && opts.valueKind !== 'real') throw new RangeError(`valueKind must be binary or real, got ${String(opts.valueKind)}`);
		this.real = opts.valueKind === 'real';
		this.chunkRows = chunkRows;
		this.d = d;
		this.labels = new Int8Array(chunkRows);
		this.lengths = new Uint32Array(chunkRows);
		this.indices = new Uint32Array(Math.min(MAX_CHUNK_NNZ, chunkRows * 64));
		this.values = new Float32Array(this.real ? this.indices.length : 0);
		this.fd = openSync(path, 'w');
		// placeholder header marked incomplete until close
		writeSync(this.fd, encodeHeader(this.header(), false), 0, HEADER_BYTES, 0);
	}

	static open(path: string, opts: BinaryWriterOptions): BinaryRowWriter {
		return new BinaryRowWriter(path, opts);
	}

	private header(): BinaryFileHeader {
		return {
			version: BINARY_VERSION,
			n: this.n,
			d: this.d,
			nnz: this.nnz,
			valueKind: this.real ? 'real' : 'binary',
			chunkRows: this.chunkRows,
			headerBytes: HEADER_BYTES,
			chunks: this.index.length / 2,
			indexOffset: this.filePos
		};
	}

	/** Append one row: label ±1, ascending 0-based indices, values (null = all 1; must be null or all 1 for binary data). */
	writeRow(label: number, indices: ArrayLike<number>, values: ArrayLike<number> | null): void {
		if (this.closed) throw new Error(`${this.path}: writeRow after close`);
		if (label !== 1 && label !== -1) throw new RangeError(`row ${this.n}: label ${label} is not +1 or -1`);
		const len = indices.length;
		if (values && values.length !== len) throw new RangeError(`row ${this.n}: ${len} indices but ${values.length} values`);
		if (len > MAX_CHUNK_NNZ) throw new RangeError(`row ${this.n}: ${len} nonzeros exceed the per-chunk limit ${MAX_CHUNK_NNZ}`);
		if (this.chunkNnz + len > MAX_CHUNK_NNZ) this.flushChunk();
		if (this.chunkNnz + len > this.indices.length) this.growChunk(this.chunkNnz + len);
		const base = this.chunkNnz;
		const idx = this.indices;
		let prev = -1;
		for (let j = 0; j < len; j++) {
			const x = indices[j];
			if (!(x > prev) || x > 0xfffffffe || !Number.isInteger(x)) throw new RangeError(`row ${this.n}: feature index ${x} is not a whole number above the previous index ${prev}`);
			idx[base + j] = x;
			prev = x;
		}
		if (this.real) {
			const val = this.values;
			if (values) {
				for (let j = 0; j < len; j++) val[base + j] = values[j];
			} else val.fill(1, base, base + len);
		} else if (values) {
			for (let j = 0; j < len; j++) if (values[j] !== 1) throw new RangeError(`row ${this.n}: value ${values[j]} in a binary-valued file`);
		}
		if (prev + 1 > this.d) this.d = prev + 1;
		this.labels[this.rows] = label;
		this.lengths[this.rows] = len;
		this.rows++;
		this.chunkNnz += len;
		this.n++;
		this.nnz += len;
		if (this.rows === this.chunkRows) this.flushChunk();
	}

	private growChunk(need: number) {
		const size = Math.min(MAX_CHUNK_NNZ, Math.max(need, this.indices.length * 2));
		const indices = new Uint32Array(size);
		indices.set(this.indices.subarray(0, this.chunkNnz));
		this.indices = indices;
		if (this.real) {
			const values = new Float32Array(size);
			values.set(this.values.subarray(0, this.chunkNnz));
			this.values = values;
		}
	}

	private flushChunk() {
		const r = this.rows;
		if (r === 0) return;
		const m = this.chunkNnz;
		const bytes = chunkRecordBytes(r, m, this.real ? 'real' : 'binary');
		if (this.outLen + bytes > this.out.length) this.flushOut();
		if (bytes > this.out.length) this.out = new Uint8Array(bytes);
		const buf = this.out.buffer;
		let p = this.outLen;
		const head = new Uint32Array(buf, p, 2);
		head[0] = r;
		head[1] = m;
		p += 8;
		this.out.set(new Uint8Array(this.labels.buffer, 0, r), p);
		this.out.fill(0, p + r, p + pad4(r));
		p += pad4(r);
		new Uint32Array(buf, p, r).set(this.lengths.subarray(0, r));
		p += 4 * r;
		new Uint32Array(buf, p, m).set(this.indices.subarray(0, m));
		p += 4 * m;
		if (this.real) {
			new Float32Array(buf, p, m).set(this.values.subarray(0, m));
			p += 4 * m;
		}
		this.index.push(this.filePos + this.outLen, this.n - r);
		this.outLen = p;
		this.rows = 0;
		this.chunkNnz = 0;
		if (this.index.length / 2 > 0xffffffff) throw new RangeError(`${this.path}: more than 2^32 chunks; raise chunkRows`);
	}

	private flushOut() {
		let done = 0;
		while (done < this.outLen) done += writeSync(this.fd, this.out, done, this.outLen - done, this.filePos + done);
		this.filePos += this.outLen;
		this.outLen = 0;
	}

	/** Flush, write the chunk index, patch n, d, nnz and mark the file complete. */
	async close(): Promise<BinaryFileHeader> {
		if (this.closed) throw new Error(`${this.path}: closed twice`);
		this.flushChunk();
		this.flushOut();
		const header = this.header();
		const index = new BigUint64Array(this.index.length);
		for (let i = 0; i < this.index.length; i++) index[i] = BigInt(this.index[i]);
		const bytes = new Uint8Array(index.buffer);
		let done = 0;
		while (done < bytes.length) done += writeSync(this.fd, bytes, done, bytes.length - done, this.filePos + done);
		writeSync(this.fd, encodeHeader(header, true), 0, HEADER_BYTES, 0);
		const size = fstatSync(this.fd).size;
		closeSync(this.fd);
		this.closed = true;
		if (size !== header.indexOffset + bytes.length) throw new Error(`${this.path}: wrote ${size} bytes, expected ${header.indexOffset + bytes.length}`);
		return header;
	}

	/** Abandon the file (left marked incomplete). */
	abort(): void {
		if (this.closed) return;
		this.closed = true;
		closeSync(this.fd);
	}
}

export interface ChunkView {
	rows: number;
	labels: Int8Array;
	lengths: Uint32Array;
	indices: Uint32Array;
	values: Float32Array | null;
	nextOffset: number;
}

/**
 * Decode the chunk record at buf[offset]: views into buf (zero-copy), or null when buf
 * does not hold the whole record. A record at a misaligned address is copied first.
 */
export function parseChunk(buf: Uint8Array, offset: number, header: Pick<BinaryHeader, 'valueKind'>): ChunkView | null {
	if (offset + 8 > buf.length) return null;
	const rows = readU32(buf, offset);
	const nnz = readU32(buf, offset + 4);
	if (rows === 0) throw new BinaryFormatError(`chunk at buffer offset ${offset} holds 0 rows (damaged file or wrong offset)`);
	const bytes = chunkRecordBytes(rows, nnz, header.valueKind);
	if (offset + bytes > buf.length) return null;
	let base = buf.buffer;
	let p = buf.byteOffset + offset;
	if (p % 4 !== 0) {
		const copy = new Uint8Array(bytes);
		copy.set(buf.subarray(offset, offset + bytes));
		base = copy.buffer;
		p = 0;
	}
	p += 8;
	const labels = new Int8Array(base, p, rows);
	p += pad4(rows);
	const lengths = new Uint32Array(base, p, rows);
	p += 4 * rows;
	const indices = new Uint32Array(base, p, nnz);
	p += 4 * nnz;
	const values = header.valueKind === 'real' ? new Float32Array(base, p, nnz) : null;
	return { rows, labels, lengths, indices, values, nextOffset: offset + bytes };
}

export interface ReadBinaryOptions {
	/** bytes per read; default 8 MiB (grown when one record is larger). Two buffers of this size are used: one is read into while the other's chunks are yielded */
	chunkBytes?: number;
	/** emulate a disk of this many MB/s (1e6 bytes); default unthrottled */
	throttleMBps?: number;
	/** called after every read with its file offset and length (reads are strictly increasing) */
	onRead?: (fileOffset: number, bytes: number) => void;
	/** first row to yield (0-based); default 0 */
	startRow?: number;
}

export interface ChunkViewAt extends ChunkView {
	firstRow: number;
	fileOffset: number;
	bytes: number;
}

async function readChunkIndex(fh: FileHandle, h: BinaryFileHeader): Promise<{ offsets: Float64Array; firstRows: Float64Array }> {
	const bytes = new Uint8Array(h.chunks * INDEX_ENTRY_BYTES);
	let done = 0;
	while (done < bytes.length) {
		const { bytesRead } = await fh.read(bytes, done, bytes.length - done, h.indexOffset + done);
		if (bytesRead === 0) throw new BinaryFormatError('chunk index is truncated');
		done += bytesRead;
	}
	const raw = new BigUint64Array(bytes.buffer);
	const offsets = new Float64Array(h.chunks);
	const firstRows = new Float64Array(h.chunks);
	for (let c = 0; c < h.chunks; c++) {
		offsets[c] = Number(raw[2 * c]);
		firstRows[c] = Number(raw[2 * c + 1]);
	}
	return { offsets, firstRows };
}

/**
 * Chunk records as zero-copy views into the read buffer, valid only until the next
 * iteration (for readers that decode straight into their own slots).
 */
export async function* readBinaryChunkViews(path: string, opts: ReadBinaryOptions = {}): AsyncGenerator<ChunkViewAt> {
	const fh = await open(path, 'r');
	let pending: Promise<number> | null = null;
	try {
		const h = await readHeaderFrom(fh, path);
		const throttle = new Throttle(opts.throttleMBps);
		let readPos = h.headerBytes;
		let row = 0;
		const startRow = opts.startRow ?? 0;
		if (startRow < 0 || startRow > h.n || !Number.isInteger(startRow)) throw new RangeError(`startRow must be a whole number from 0 to ${h.n}, got ${startRow}`);
		if (startRow >= h.n) return;
		if (startRow > 0) {
			const { offsets, firstRows } = await readChunkIndex(fh, h);
			let lo = 0;
			let hi = h.chunks - 1;
			while (lo < hi) {
				const mid = (lo + hi + 1) >> 1;
				if (firstRows[mid] <= startRow) lo = mid;
				else hi = mid - 1;
			}
			readPos = offsets[lo];
			row = firstRows[lo];
		}
		const end = h.indexOffset;
		const size = Math.max(4096, pad4(opts.chunkBytes ?? DEFAULT_READ_BYTES));
		// two buffers: the next read fills one while the chunks of the other are yielded
		let cur = new Uint8Array(size);
		let next = new Uint8Array(size);
		let curFileOffset = readPos;
		const readInto = async (buf: Uint8Array, at: number): Promise<number> => {
			const offset = readPos;
			const want = Math.min(buf.length - at, end - offset);
			readPos += want;
			await throttle.take(want);
			let done = 0;
			while (done < want) {
				const { bytesRead } = await fh.read(buf, at + done, want - done, offset + done);
				if (bytesRead === 0) throw new BinaryFormatError(`${path}: unexpected end of file at byte ${offset + done}`);
				done += bytesRead;
			}
			opts.onRead?.(offset, want);
			return want;
		};
		const recordAt = (buf: Uint8Array, at: number) => chunkRecordBytes(readU32(buf, at), readU32(buf, at + 4), h.valueKind);
		let filled = await readInto(cur, 0);
		for (;;) {
			// complete records in cur[0, cut)
			let cut = 0;
			while (cut + 8 <= filled && cut + recordAt(cur, cut) <= filled) cut += recordAt(cur, cut);
			const rest = filled - cut;
			if (cut === 0) {
				if (rest === 0 && readPos >= end) break;
				if (readPos >= end) throw new BinaryFormatError(`${path}: ${rest} bytes of a partial chunk before the chunk index`);
				// one record larger than the buffer: grow it, then read on into the same buffer
				if (rest >= 8 && recordAt(cur, 0) > cur.length) {
					const bigger = new Uint8Array(pad4(recordAt(cur, 0)));
					bigger.set(cur.subarray(0, rest));
					cur = bigger;
				}
				filled += await readInto(cur, filled);
				continue;
			}
			// the partial record moves to the front of the other buffer; records start on 4-byte file offsets, so alignment holds
			if (rest >= 8 && recordAt(cur, cut) > next.length) next = new Uint8Array(pad4(recordAt(cur, cut)));
			next.set(cur.subarray(cut, filled), 0);
			pending = readPos < end ? readInto(next, rest) : null;
			let pos = 0;
			while (pos < cut) {
				const view = parseChunk(cur, pos, h)!;
				const at: ChunkViewAt = { ...view, firstRow: row, fileOffset: curFileOffset + pos, bytes: view.nextOffset - pos };
				row += view.rows;
				pos = view.nextOffset;
				if (row > startRow) yield at;
			}
			const got = pending ? await pending : 0;
			pending = null;
			[cur, next] = [next, cur];
			curFileOffset += cut;
			filled = rest + got;
		}
		if (row !== h.n) throw new BinaryFormatError(`${path}: chunks hold ${row} rows but the header says ${h.n}`);
	} finally {
		// a consumer that stops early leaves a read in flight: let it land before closing
		if (pending) await pending.catch(() => {});
		await fh.close();
	}
}

/** Copy a chunk view out into SparseRows of its own, skipping its first `skip` rows. */
export function chunkToRows(view: ChunkView, d: number, skip = 0): SparseRows {
	const n = view.rows - skip;
	const rowPtr = new Float64Array(n + 1);
	let first = 0;
	for (let i = 0; i < skip; i++) first += view.lengths[i];
	let acc = 0;
	for (let i = 0; i < n; i++) {
		acc += view.lengths[skip + i];
		rowPtr[i + 1] = acc;
	}
	return {
		n,
		d,
		labels: view.labels.slice(skip),
		rowPtr,
		indices: view.indices.slice(first, first + acc),
		values: view.values ? view.values.slice(first, first + acc) : null
	};
}

/**
 * Sequential chunk reader: large strictly increasing reads, each chunk decoded into
 * SparseRows the caller may keep. `bytes` is the chunk record's size on disk.
 */
export async function* readBinaryChunks(
	path: string,
	opts: ReadBinaryOptions = {}
): AsyncGenerator<{ firstRow: number; rows: SparseRows; fileOffset: number; bytes: number }> {
	const header = await readBinaryHeader(path);
	const startRow = opts.startRow ?? 0;
	for await (const v of readBinaryChunkViews(path, opts)) {
		const skip = Math.max(0, startRow - v.firstRow);
		yield { firstRow: v.firstRow + skip, rows: chunkToRows(v, header.d, skip), fileOffset: v.fileOffset, bytes: v.bytes };
	}
}

/** The whole file in RAM (memory strategy): large sequential reads, each chunk copied into place. */
export async function loadBinary(path: string, opts: Omit<ReadBinaryOptions, 'startRow'> = {}): Promise<SparseRows> {
	const h = await readBinaryHeader(path);
	const labels = new Int8Array(h.n);
	const rowPtr = new Float64Array(h.n + 1);
	const indices = new Uint32Array(h.nnz);
	const values = h.valueKind === 'real' ? new Float32Array(h.nnz) : null;
	let row = 0;
	let at = 0;
	for await (const v of readBinaryChunkViews(path, opts)) {
		if (row + v.rows > h.n || at + v.indices.length > h.nnz) throw new BinaryFormatError(`${path}: chunks hold more rows or nonzeros than the header says`);
		labels.set(v.labels, row);
		indices.set(v.indices, at);
		if (values && v.values) values.set(v.values, at);
		const lengths = v.lengths;
		for (let i = 0; i < v.rows; i++) {
			at += lengths[i];
			rowPtr[++row] = at;
		}
	}
	if (row !== h.n || at !== h.nnz) throw new BinaryFormatError(`${path}: chunks hold ${row} rows and ${at} nonzeros but the header says ${h.n} and ${h.nnz}`);
	return { n: h.n, d: h.d, labels, rowPtr, indices, values };
}
