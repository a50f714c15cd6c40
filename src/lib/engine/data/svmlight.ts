/**
 * Streaming svmlight text-row parser, working on bytes.
 *
 * Accepted (after the svmlight / libsvm text format: `<label> <index>:<value> ... # comment`):
 * - labels +1 / -1, and 1 / 0 (0 is mapped to -1); any number equal to one of those ("1.0");
 * - 1-based feature indices, strictly ascending within a row, up to 4294967295;
 * - finite decimal values that fit a 32-bit float (stored as f32);
 * - `#` starts a comment to the end of the line; blank and comment-only lines are skipped;
 * - `qid:<n>` right after the label is tolerated and ignored (rows are not grouped);
 * - spaces, tabs and CR (CRLF line ends) separate tokens; a UTF-8 byte order mark at the start is skipped.
 * Every other line is an error naming its 1-based line number and the problem.
 */
import { open } from 'node:fs/promises';
import type { SparseRows } from '../types.js';
import { ProfileStats, type DataProfile } from './stats.js';

export class TextRowError extends Error {
	constructor(
		message: string,
		/** 1-based line number, or 0 for problems of the whole file */
		readonly line: number
	) {
		super(message);
	}
}

/** A run of parsed rows; arrays are reused after the callback returns. */
export interface TextRowBatch {
	/** 0-based number of the first row */
	firstRow: number;
	n: number;
	labels: Int8Array;
	/** n + 1 offsets from 0 */
	rowPtr: Float64Array;
	/** 0-based indices */
	indices: Uint32Array;
	values: Float32Array;
}

export interface ParseOptions {
	/** called for every full batch and the last one; copy what you keep */
	onBatch?: (batch: TextRowBatch) => void;
	/** rows per batch; default 4096 */
	batchRows?: number;
	/** bytes per file read; default 4 MiB */
	readBytes?: number;
}

const MAX_INDEX = 4294967295;
/** values above this round to Infinity as f32 (largest f32 plus half an ulp) */
const F32_MAX = 3.4028235677973366e38;
const P10 = Array.from({ length: 23 }, (_, i) => 10 ** i);
const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;
const NOT_FINITE = /^[+-]?(nan|inf|infinity)$/i;

const isDelim = (c: number) => c === 32 || c === 9 || c === 10 || c === 13 || c === 35;

function text(buf: Uint8Array, start: number, end: number): string {
	let s = '';
	for (let i = start; i < end && s.length < 40; i++) s += String.fromCharCode(buf[i]);
	return end - start > 40 ? s + '…' : s;
}

/** Byte-level line parser; feed it whole lines, each ending in '\n'. */
export class SvmlightParser {
	readonly stats = new ProfileStats();
	line = 0;
	private readonly batchRows: number;
	private readonly onBatch?: (batch: TextRowBatch) => void;
	private labels: Int8Array;
	private rowPtr: Float64Array;
	private indices: Uint32Array;
	private values: Float32Array;
	private rows = 0;
	private nnz = 0;
	private firstRow = 0;

	constructor(opts: ParseOptions = {}) {
		this.batchRows = opts.batchRows ?? 4096;
		this.onBatch = opts.onBatch;
		this.labels = new Int8Array(this.batchRows);
		this.rowPtr = new Float64Array(this.batchRows + 1);
		this.indices = new Uint32Array(this.batchRows * 64);
		this.values = new Float32Array(this.indices.length);
	}

	private fail(problem: string): never {
		throw new TextRowError(`line ${this.line}: ${problem}`, this.line);
	}

	private grow(need: number) {
		const size = Math.max(need, this.indices.length * 2);
		const indices = new Uint32Array(size);
		indices.set(this.indices.subarray(0, this.nnz));
		const values = new Float32Array(size);
		values.set(this.values.subarray(0, this.nnz));
		this.indices = indices;
		this.values = values;
	}

	/** Emit the rows held so far as one batch. */
	flush(): void {
		if (this.rows === 0) return;
		this.onBatch?.({
			firstRow: this.firstRow,
			n: this.rows,
			labels: this.labels.subarray(0, this.rows),
			rowPtr: this.rowPtr.subarray(0, this.rows + 1),
			indices: this.indices.subarray(0, this.nnz),
			values: this.values.subarray(0, this.nnz)
		});
		this.firstRow += this.rows;
		this.rows = 0;
		this.nnz = 0;
	}

	/** Parse buf[pos, end): whole lines, buf[end - 1] must be '\n'. */
	feed(buf: Uint8Array, pos: number, end: number): void {
		// every scanning loop stops at '\n', so a final newline keeps them inside the buffer
		if (end > pos && buf[end - 1] !== 10) throw new RangeError('feed needs whole lines: the last byte must be a newline');
		// a UTF-8 byte order mark some editors put first is not part of the first label
		if (this.line === 0 && buf[pos] === 0xef && buf[pos + 1] === 0xbb && buf[pos + 2] === 0xbf) pos += 3;
		const stats = this.stats;
		let indices = this.indices;
		let values = this.values;
		let nnz = this.nnz;
		let allOnes = stats.allOnes;
		while (pos < end) {
			this.line++;
			let c = buf[pos];
			while (c === 32 || c === 9 || c === 13) c = buf[++pos];
			if (c === 10) {
				pos++;
				continue;
			}
			if (c === 35) {
				while (buf[pos] !== 10) pos++;
				pos++;
				continue;
			}
			// label
			let label: number;
			const n1 = buf[pos + 1];
			if (c === 43 && n1 === 49 && isDelim(buf[pos + 2])) {
				label = 1;
				pos += 2;
			} else if (c === 45 && n1 === 49 && isDelim(buf[pos + 2])) {
				label = -1;
				pos += 2;
			} else if ((c === 49 || c === 48) && isDelim(n1)) {
				label = c === 49 ? 1 : -1;
				pos += 1;
			} else {
				const start = pos;
				while (!isDelim(buf[pos])) pos++;
				const s = text(buf, start, pos);
				const x = DECIMAL.test(s) ? Number(s) : NaN;
				if (x === 1) label = 1;
				else if (x === -1 || x === 0) label = -1;
				else this.fail(`label "${s}" is not +1, -1, 0 or 1`);
			}
			const rowStart = nnz;
			let prev = 0;
			let mayQid = true;
			for (;;) {
				c = buf[pos];
				if (c === 32) c = buf[++pos];
				while (c === 32 || c === 9 || c === 13) c = buf[++pos];
				if (c === 10) {
					pos++;
					break;
				}
				if (c === 35) {
					while (buf[pos] !== 10) pos++;
					pos++;
					break;
				}
				const tokStart = pos;
				let idx = 0;
				let dg = c - 48;
				while (dg >>> 0 < 10) {
					idx = idx * 10 + dg;
					dg = buf[++pos] - 48;
				}
				c = dg + 48;
				if (c !== 58 || pos === tokStart) {
					if (mayQid && c === 113 && buf[pos + 1] === 105 && buf[pos + 2] === 100 && buf[pos + 3] === 58) {
						pos += 4;
						while (!isDelim(buf[pos])) pos++;
						mayQid = false;
						continue;
					}
					let colon = pos;
					while (!isDelim(buf[colon]) && buf[colon] !== 58) colon++;
					if (buf[colon] !== 58) {
						let e = colon;
						while (!isDelim(buf[e])) e++;
						this.fail(`"${text(buf, tokStart, e)}" is not index:value`);
					}
					this.fail(`feature index "${text(buf, tokStart, colon)}" is not a whole number`);
				}
				mayQid = false;
				if (idx === 0) this.fail('feature index 0 (indices are 1-based)');
				if (idx <= prev) this.fail(`feature index ${idx} after ${prev} (indices must be ascending)`);
				if (idx > MAX_INDEX) this.fail(`feature index ${text(buf, tokStart, pos)} is above ${MAX_INDEX}`);
				c = buf[++pos];
				let v: number;
				if (c === 49 && isDelim(buf[pos + 1])) {
					v = 1;
					pos++;
				} else {
					const vStart = pos;
					let neg = false;
					if (c === 45) {
						neg = true;
						c = buf[++pos];
					} else if (c === 43) c = buf[++pos];
					let mant = 0;
					let digits = 0;
					let scale = 0;
					let dg = c - 48;
					while (dg >>> 0 < 10) {
						mant = mant * 10 + dg;
						digits++;
						dg = buf[++pos] - 48;
					}
					if (dg === -2) {
						const dot = ++pos;
						dg = buf[pos] - 48;
						while (dg >>> 0 < 10) {
							mant = mant * 10 + dg;
							dg = buf[++pos] - 48;
						}
						scale = pos - dot;
						digits += scale;
					}
					c = dg + 48;
					let exp = 0;
					let expOk = true;
					if (c === 101 || c === 69) {
						c = buf[++pos];
						let eneg = false;
						if (c === 45) {
							eneg = true;
							c = buf[++pos];
						} else if (c === 43) c = buf[++pos];
						expOk = c >= 48 && c <= 57;
						while (c >= 48 && c <= 57) {
							exp = exp * 10 + (c - 48);
							c = buf[++pos];
						}
						if (eneg) exp = -exp;
					}
					const e10 = exp - scale;
					if (digits > 0 && expOk && isDelim(c) && digits <= 15 && e10 >= -22 && e10 <= 22) {
						v = e10 < 0 ? mant / P10[-e10] : mant * P10[e10];
						if (neg) v = -v;
					} else {
						while (!isDelim(buf[pos])) pos++;
						const s = text(buf, vStart, pos);
						if (DECIMAL.test(s)) v = Number(s);
						else if (NOT_FINITE.test(s)) this.fail(`value "${s}" of feature ${idx} is not finite`);
						else this.fail(`value "${s}" of feature ${idx} is not a number`);
					}
					if (!(Math.abs(v) <= F32_MAX)) this.fail(`value "${text(buf, vStart, pos)}" of feature ${idx} is too large for a 32-bit float`);
					if (v !== 1) allOnes = false;
				}
				if (nnz === indices.length) {
					this.nnz = nnz;
					this.grow(nnz + 1);
					indices = this.indices;
					values = this.values;
				}
				indices[nnz] = idx - 1;
				values[nnz] = v;
				nnz++;
				prev = idx;
			}
			const r = this.rows;
			this.labels[r] = label;
			this.rowPtr[r + 1] = nnz;
			this.rows = r + 1;
			stats.add(label, nnz - rowStart, prev - 1);
			if (this.rows === this.batchRows) {
				this.nnz = nnz;
				stats.allOnes = allOnes;
				this.flush();
				nnz = 0;
				indices = this.indices;
				values = this.values;
			}
		}
		this.nnz = nnz;
		stats.allOnes = allOnes;
	}

	/** Flush the last batch; errors when no row was seen. */
	finish(bytes: number): DataProfile {
		this.flush();
		if (this.stats.rows === 0) {
			throw new TextRowError(bytes === 0 ? 'no rows: the file is empty' : 'no rows: the file holds only comments and blank lines', 0);
		}
		return this.stats.finish(bytes, 'svm');
	}
}

/** Parse a text-row file in large reads; resolves to its profile. */
export async function parseSvmlightFile(path: string, opts: ParseOptions = {}): Promise<DataProfile> {
	const parser = new SvmlightParser(opts);
	const fh = await open(path, 'r');
	let pending: Promise<{ bytesRead: number }> | null = null;
	try {
		const size = Math.max(16, opts.readBytes ?? 4 << 20);
		// two buffers: the next read fills one while the lines of the other are parsed
		let cur = new Uint8Array(size);
		let next = new Uint8Array(size);
		let filled = 0;
		let bytes = 0;
		let eof = false;
		let got = (await fh.read(cur, 0, cur.length, null)).bytesRead;
		for (;;) {
			if (got === 0) eof = true;
			bytes += got;
			const end = filled + got;
			let last = end - 1;
			while (last >= filled && cur[last] !== 10) last--;
			if (eof) {
				filled = end;
				break;
			}
			if (last < filled) {
				// no line end yet: read on into the same buffer, growing it when full
				filled = end;
				if (filled === cur.length) {
					const bigger = new Uint8Array(cur.length * 2);
					bigger.set(cur);
					cur = bigger;
				}
				got = (await fh.read(cur, filled, cur.length - filled, null)).bytesRead;
				continue;
			}
			const rest = end - last - 1;
			if (next.length < Math.max(rest * 2, size)) next = new Uint8Array(Math.max(rest * 2, size));
			next.set(cur.subarray(last + 1, end), 0);
			pending = fh.read(next, rest, next.length - rest, null);
			parser.feed(cur, 0, last + 1);
			got = (await pending).bytesRead;
			pending = null;
			[cur, next] = [next, cur];
			filled = rest;
		}
		if (filled > 0) {
			// last line without a newline: give it one so every line ends in '\n'
			const tail = new Uint8Array(filled + 1);
			tail.set(cur.subarray(0, filled));
			tail[filled] = 10;
			parser.feed(tail, 0, filled + 1);
		}
		return parser.finish(bytes);
	} finally {
		// a parse error leaves a read in flight: let it land before closing
		if (pending) await pending.catch(() => {});
		await fh.close();
	}
}

/** Collects batches into one SparseRows. */
class RowCollector {
	private labels = new Int8Array(1024);
	private rowPtr = new Float64Array(1025);
	private indices = new Uint32Array(16384);
	private values = new Float32Array(16384);
	private n = 0;
	private nnz = 0;

	add = (b: TextRowBatch) => {
		if (this.n + b.n > this.labels.length) {
			const size = Math.max(this.n + b.n, this.labels.length * 2);
			const labels = new Int8Array(size);
			labels.set(this.labels.subarray(0, this.n));
			this.labels = labels;
			const rowPtr = new Float64Array(size + 1);
			rowPtr.set(this.rowPtr.subarray(0, this.n + 1));
			this.rowPtr = rowPtr;
		}
		if (this.nnz + b.indices.length > this.indices.length) {
			const size = Math.max(this.nnz + b.indices.length, this.indices.length * 2);
			const indices = new Uint32Array(size);
			indices.set(this.indices.subarray(0, this.nnz));
			this.indices = indices;
			const values = new Float32Array(size);
			values.set(this.values.subarray(0, this.nnz));
			this.values = values;
		}
		this.labels.set(b.labels, this.n);
		for (let i = 1; i <= b.n; i++) this.rowPtr[this.n + i] = this.nnz + b.rowPtr[i];
		this.indices.set(b.indices, this.nnz);
		this.values.set(b.values, this.nnz);
		this.n += b.n;
		this.nnz += b.indices.length;
	};

	rows(profile: DataProfile): SparseRows {
		return {
			n: this.n,
			d: profile.maxFeature,
			labels: this.labels.slice(0, this.n),
			rowPtr: this.rowPtr.slice(0, this.n + 1),
			indices: this.indices.slice(0, this.nnz),
			values: profile.valueKind === 'binary' ? null : this.values.slice(0, this.nnz)
		};
	}
}

/** A whole text-row file in RAM, with its profile. */
export async function loadSvmlight(path: string): Promise<{ rows: SparseRows; profile: DataProfile }> {
	const collect = new RowCollector();
	const profile = await parseSvmlightFile(path, { onBatch: collect.add });
	return { rows: collect.rows(profile), profile };
}

/** Parse text rows held in memory (tests, small uploads). */
export function parseSvmlight(input: string | Uint8Array): { rows: SparseRows; profile: DataProfile } {
	const bytes = typeof input === 'string' ? new TextEncoder().encode(input) : input;
	const buf = new Uint8Array(bytes.length + 1);
	buf.set(bytes);
	let end = bytes.length;
	if (end > 0 && bytes[end - 1] !== 10) buf[end++] = 10;
	const collect = new RowCollector();
	const parser = new SvmlightParser({ onBatch: collect.add });
	parser.feed(buf, 0, end);
	const profile = parser.finish(bytes.length);
	return { rows: collect.rows(profile), profile };
}
