/**
 * Calibration on a real sample instead of synthetic data: the sample (Loadline binary rows) is
 * held in RAM and each run's row file is cut from it. The first seed takes the first `rows`
 * rows; any other seed takes a seeded random selection of `rows` rows in shuffled order, so two
 * seeds still give a spread. Rows are never repeated: a run cannot ask for more rows than the
 * sample holds (calibrate() caps its ladder there), and a larger ask gets the whole sample.
 */
import type { Plan } from '../../schemas/plan.js';
import type { SparseRows } from '../types.js';
import type { CalibrationData } from './record.js';
import { existsSync } from 'node:fs';
import { basename, join } from 'node:path';
import { BinaryRowWriter, loadBinary, readBinaryHeader } from '../data/binary.js';
import { convertSvmlightToBinary } from '../data/convert.js';
import { detectFormat } from '../data/profile.js';
import { SvmlightWriter } from '../data/svmlight-writer.js';
import { Random } from '../data/random.js';

/** The sample as calibrate() takes it (CalibrateOptions.sample). */
export interface SampleInput {
	/** Loadline binary row file of the sample */
	path: string;
	/** rows in the file (checked against its header) */
	rows: number;
	/** feature dimension of the file (checked against its header) */
	features: number;
	/** the upload the sample came from, named in the record */
	uploadId?: string;
	/** the sample's file name as the user knows it, named in the record and notes */
	name?: string;
}

/** What the record says about its data (CalibrationRecord.data for a sample). */
export type SampleData = Extract<CalibrationData, { source: 'sample' }>;

export interface OpenSample {
	rows: number;
	features: number;
	/** the plan with its dataset shape (features, nonzeros per row, positives, value kind) taken from the sample; rows and on-disk form stay the plan's */
	shape: (plan: Plan) => Plan;
	/** write `rows` rows (at most the sample's) for this seed; the first seed takes the first rows */
	write: (rows: number, seed: number, firstSeed: number, path: string, format: 'bin' | 'svm') => Promise<number>;
	data: SampleData;
	/** notes for the record: the source, and the cap when the plan asks for more rows than the sample holds */
	notes: (wantedRows: number) => string[];
}

/** Row indices for a seed: the first n, or a seeded partial Fisher–Yates selection (Knuth, TAOCP vol. 2, Algorithm P). */
export function sampleOrder(total: number, rows: number, seed: number, first: boolean): Uint32Array {
	const n = Math.min(rows, total);
	const all = new Uint32Array(total);
	for (let i = 0; i < total; i++) all[i] = i;
	if (first) return all.subarray(0, n);
	const rnd = new Random(seed, 7);
	for (let i = 0; i < n; i++) {
		const j = i + rnd.int(total - i);
		const t = all[i];
		all[i] = all[j];
		all[j] = t;
	}
	return all.subarray(0, n);
}

async function writeRows(s: SparseRows, order: Uint32Array, path: string, format: 'bin' | 'svm'): Promise<void> {
	const real = s.values !== null;
	const w = format === 'bin' ? BinaryRowWriter.open(path, { d: s.d, valueKind: real ? 'real' : 'binary' }) : SvmlightWriter.open(path);
	try {
		for (const i of order) {
			const lo = s.rowPtr[i];
			const hi = s.rowPtr[i + 1];
			w.writeRow(s.labels[i], s.indices.subarray(lo, hi), real ? s.values!.subarray(lo, hi) : null);
		}
		await w.close();
	} catch (err) {
		w.abort();
		throw err;
	}
}

/** Load the sample and check it against what the caller says it is; errors name the field. */
export async function openSample(input: SampleInput, maxFeatures = 2 ** 24): Promise<OpenSample> {
	let s: SparseRows;
	try {
		s = await loadBinary(input.path);
	} catch (err) {
		throw new Error(`sample.path: ${input.path} is not a readable Loadline binary row file (${err instanceof Error ? err.message : String(err)})`);
	}
	if (s.n !== input.rows) throw new Error(`sample.rows is ${input.rows} but ${input.path} holds ${s.n} rows`);
	if (s.d !== input.features) throw new Error(`sample.features is ${input.features} but ${input.path} has ${s.d} features`);
	if (s.n < 2) throw new Error(`sample.rows: the sample holds ${s.n} row; a calibration needs at least 2`);
	if (s.d > maxFeatures) throw new Error(`sample.features: the sample has ${s.d} features, more than the ${maxFeatures} a calibration can hold`);
	let positives = 0;
	for (let i = 0; i < s.n; i++) if (s.labels[i] > 0) positives++;
	if (positives === 0 || positives === s.n) throw new Error(`sample: every row of the sample is ${positives ? 'positive' : 'negative'}; a classifier needs both labels`);
	const nnz = s.rowPtr[s.n];
	if (nnz === 0) throw new Error('sample: the sample holds no nonzero values');
	const label = input.name ? `${input.uploadId ? 'the uploaded sample' : 'the sample'} "${input.name}"` : 'a real sample';
	const data: SampleData = { source: 'sample', rows: s.n, features: s.d, ...(input.uploadId && { uploadId: input.uploadId }), ...(input.name && { name: input.name }) };
	return {
		rows: s.n,
		features: s.d,
		data,
		shape: (plan) => ({
			...plan,
			dataset: {
				...plan.dataset,
				features: s.d,
				nnzPerRow: Math.min(s.d, Math.max(1e-3, nnz / s.n)),
				positiveFraction: positives / s.n,
				valueKind: s.values ? 'real' : 'binary'
			}
		}),
		write: async (rows, seed, firstSeed, path, format) => {
			const order = sampleOrder(s.n, rows, seed, seed === firstSeed);
			await writeRows(s, order, path, format);
			return order.length;
		},
		notes: (wantedRows) => [
			`ran on ${label} (${s.n} rows, ${s.d} features), not on synthetic data; the first seed took the sample's first rows, other seeds a seeded random selection`,
			...(wantedRows > s.n ? [`runs were capped at the sample's ${s.n} rows (rows are never repeated); larger row counts are extrapolated`] : [])
		]
	};
}

/** A sample file as it is on disk (binary rows, or svmlight text rows converted into workDir first) as calibrate() takes it. */
export async function sampleFromFile(path: string, workDir: string): Promise<SampleInput> {
	if (!existsSync(path)) throw new Error(`no file at ${path}`);
	let bin = path;
	if ((await detectFormat(path)) === 'svm') {
		bin = join(workDir, 'sample.bin');
		await convertSvmlightToBinary(path, bin);
	}
	const h = await readBinaryHeader(bin);
	return { path: bin, rows: h.n, features: h.d, name: basename(path) };
}
