/**
 * Read an uploaded sample line by line, keeping going past malformed lines: each bad line is
 * counted and the first few kept with their line numbers. svmlight text rows go through the
 * engine's parser (a fresh one after each bad line, so a half-parsed line leaves nothing
 * behind); CSV rows with a named label column become sparse rows of their nonzero columns.
 */
import { open } from 'node:fs/promises';
import { SvmlightParser, TextRowError } from '../../engine/data/svmlight.js';
import { ProfileStats } from '../../engine/data/stats.js';
import { BAD_LINES_KEPT } from './config.js';

export interface BadLine {
	line: number;
	message: string;
}

export interface SampleProfile {
	format: 'svmlight' | 'csv';
	rows: number;
	/** largest 1-based feature index seen (CSV: feature columns); names follow the engine's DataProfile */
	maxFeature: number;
	nnzMean: number;
	nnzStd: number;
	positiveFraction: number;
	valueKind: 'binary' | 'real';
	bytesPerRow: number;
	bytes: number;
	nnz: number;
	/** lines that held a row or an error (blank and comment lines not counted) */
	lines: number;
	badLineCount: number;
	badLines: BadLine[];
	/** CSV: the feature columns in order, the label column left out */
	columns?: string[];
}

type LineSink = (buf: Uint8Array, start: number, end: number, lineNo: number) => void;
/** every good row as it is read: label ±1, 0-based ascending indices, values (the first `length` entries) */
export type RowSink = (label: number, indices: ArrayLike<number>, values: ArrayLike<number>, length: number) => void;

/** Call sink for every line of the file, each ending in '\n' (one is added to a last line without it). */
async function eachLine(path: string, sink: LineSink): Promise<number> {
	const fh = await open(path, 'r');
	let bytes = 0;
	let lineNo = 0;
	try {
		let buf = new Uint8Array(4 << 20);
		let filled = 0;
		for (;;) {
			if (filled === buf.length) {
				const bigger = new Uint8Array(buf.length * 2);
				bigger.set(buf);
				buf = bigger;
			}
			const { bytesRead } = await fh.read(buf, filled, buf.length - filled, null);
			if (bytesRead === 0) break;
			bytes += bytesRead;
			const end = filled + bytesRead;
			let start = 0;
			for (let i = filled; i < end; i++) {
				if (buf[i] === 10) {
					sink(buf, start, i + 1, ++lineNo);
					start = i + 1;
				}
			}
			buf.copyWithin(0, start, end);
			filled = end - start;
		}
		if (filled > 0) {
			const tail = new Uint8Array(filled + 1);
			tail.set(buf.subarray(0, filled));
			tail[filled] = 10;
			sink(tail, 0, filled + 1, ++lineNo);
		}
	} finally {
		await fh.close();
	}
	return bytes;
}

class Collector {
	readonly stats = new ProfileStats();
	lines = 0;
	badCount = 0;
	readonly bad: BadLine[] = [];
	allOnes = true;

	constructor(private readonly sink?: RowSink) {}

	row(label: number, indices: ArrayLike<number>, values: ArrayLike<number>, length: number) {
		this.sink?.(label, indices, values, length);
		this.lines++;
		for (let j = 0; j < length && this.allOnes; j++) if (values[j] !== 1) this.allOnes = false;
		this.stats.add(label, length, length > 0 ? indices[length - 1] : -1);
	}

	error(line: number, message: string) {
		this.lines++;
		this.badCount++;
		if (this.bad.length < BAD_LINES_KEPT) this.bad.push({ line, message });
	}

	finish(bytes: number, format: SampleProfile['format'], columns?: string[]): SampleProfile {
		const p = this.stats.finish(bytes, 'svm', this.allOnes ? 'binary' : 'real');
		return {
			format,
			rows: p.rows,
			maxFeature: columns ? columns.length : p.maxFeature,
			nnzMean: p.nnzMean,
			nnzStd: p.nnzStd,
			positiveFraction: p.positiveFraction,
			valueKind: p.valueKind,
			bytesPerRow: p.bytesPerRow,
			bytes,
			nnz: p.nnz,
			lines: this.lines,
			badLineCount: this.badCount,
			badLines: this.bad,
			...(columns && { columns })
		};
	}
}

export async function parseSvmlightSample(path: string, onRow?: RowSink): Promise<SampleProfile> {
	const out = new Collector(onRow);
	const fresh = () =>
		new SvmlightParser({
			batchRows: 1,
			onBatch: (b) => out.row(b.labels[0], b.indices, b.values, b.indices.length)
		});
	let parser = fresh();
	const bytes = await eachLine(path, (buf, start, end, lineNo) => {
		try {
			parser.feed(buf, start, end);
		} catch (err) {
			if (!(err instanceof TextRowError)) throw err;
			out.error(lineNo, err.message.replace(/^line \d+: /, ''));
			parser = fresh();
		}
	});
	return out.finish(bytes, 'svmlight');
}

const decoder = new TextDecoder('utf-8', { fatal: false });

/** Split one CSV line; quoted fields may hold commas and doubled quotes. */
export function splitCsv(line: string): string[] {
	const out: string[] = [];
	let i = 0;
	for (;;) {
		let field = '';
		if (line[i] === '"') {
			i++;
			for (;;) {
				const q = line.indexOf('"', i);
				if (q === -1) throw new Error('a quoted field is not closed');
				field += line.slice(i, q);
				i = q + 1;
				if (line[i] === '"') {
					field += '"';
					i++;
				} else break;
			}
			if (i < line.length && line[i] !== ',') throw new Error('text after a closing quote');
		} else {
			const c = line.indexOf(',', i);
			field = line.slice(i, c === -1 ? line.length : c);
			i = c === -1 ? line.length : c;
		}
		out.push(field.trim());
		if (i >= line.length) return out;
		i++; // the comma
	}
}

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** CSV with a header row; the label column holds 1 / +1 (positive) or 0 / -1 (negative); other columns are numbers, empty = 0. */
export async function parseCsvSample(path: string, labelColumn: string, onRow?: RowSink): Promise<SampleProfile> {
	const out = new Collector(onRow);
	let header: string[] | null = null;
	let labelAt = -1;
	let columns: string[] = [];
	let headerProblem: string | null = null;
	const indices: number[] = [];
	const values: number[] = [];
	const bytes = await eachLine(path, (buf, start, end, lineNo) => {
		const text = decoder.decode(buf.subarray(start, end)).replace(/\r?\n$/, '');
		if (text.trim() === '') return;
		let fields: string[];
		try {
			fields = splitCsv(text);
		} catch (err) {
			if (header) out.error(lineNo, (err as Error).message);
			else headerProblem = `line ${lineNo}: the header row is not valid CSV (${(err as Error).message})`;
			return;
		}
		if (!header) {
			header = fields;
			labelAt = fields.indexOf(labelColumn);
			columns = fields.filter((_, i) => i !== labelAt);
			if (labelAt === -1) headerProblem = `line ${lineNo}: the header has no column named "${labelColumn}" (it has ${fields.slice(0, 8).map((f) => `"${f}"`).join(', ')}${fields.length > 8 ? ', …' : ''})`;
			return;
		}
		if (headerProblem) return;
		if (fields.length !== header.length) return out.error(lineNo, `${fields.length} fields where the header has ${header.length}`);
		const y = fields[labelAt];
		const label = y === '1' || y === '+1' || y === '1.0' ? 1 : y === '0' || y === '-1' || y === '0.0' || y === '-1.0' ? -1 : 0;
		if (label === 0) return out.error(lineNo, `label column "${labelColumn}": "${y.slice(0, 40)}" is not 1, 0 or -1`);
		indices.length = 0;
		values.length = 0;
		for (let i = 0, j = 0; i < fields.length; i++) {
			if (i === labelAt) continue;
			const f = fields[i];
			if (f !== '') {
				if (!NUMBER.test(f)) return out.error(lineNo, `column "${header[i]}": "${f.slice(0, 40)}" is not a number`);
				const v = Number(f);
				if (v !== 0) {
					indices.push(j);
					values.push(v);
				}
			}
			j++;
		}
		out.row(label, indices, values, indices.length);
	});
	if (headerProblem) throw new TextRowError(headerProblem, 0);
	if (!header) throw new TextRowError('no rows: the file holds no header and no rows', 0);
	return out.finish(bytes, 'csv', columns);
}
