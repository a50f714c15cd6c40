/**
 * A parsed sample as Loadline binary rows, for a calibration on real data. The upload keeps only
 * its text; this reads it again with the same line-by-line parsers the parse job used (malformed
 * lines skipped, as in the profile) and writes the good rows. Plain Node: runs in the calibration thread.
 */
import { unlink } from 'node:fs/promises';
import { BinaryRowWriter } from '../../engine/data/binary.js';
import type { SampleInput } from '../../engine/calibrate/sample.js';
import { parseCsvSample, parseSvmlightSample } from './parse-sample.js';

/** What the calibration job needs to know of an upload (from its row and profile). */
export interface SampleSource {
	/** the stored text file */
	textPath: string;
	kind: 'svmlight' | 'csv';
	labelColumn: string | null;
	valueKind: 'binary' | 'real';
	/** the profile's maxFeature (CSV: feature columns) */
	features: number;
	uploadId: string;
	fileName: string;
}

export async function writeSampleRows(src: SampleSource, out: string): Promise<SampleInput> {
	const real = src.valueKind === 'real';
	const writer = BinaryRowWriter.open(out, { d: src.features, valueKind: src.valueKind });
	const onRow = (label: number, indices: ArrayLike<number>, values: ArrayLike<number>, length: number) => {
		// the parsers hand over exactly the row's entries; copy only when a buffer is longer
		const cut = (xs: ArrayLike<number>) => (xs.length === length ? xs : Array.from({ length }, (_, j) => xs[j]));
		writer.writeRow(label, cut(indices), real ? cut(values) : null);
	};
	try {
		if (src.kind === 'csv') await parseCsvSample(src.textPath, src.labelColumn ?? '', onRow);
		else await parseSvmlightSample(src.textPath, onRow);
		const header = await writer.close();
		return { path: out, rows: header.n, features: header.d, uploadId: src.uploadId, name: src.fileName };
	} catch (err) {
		writer.abort();
		await unlink(out).catch(() => {});
		const missing = (err as { code?: string }).code === 'ENOENT';
		throw new Error(missing ? 'the uploaded sample is missing where the worker looks for it (the web app and the worker need the same UPLOAD_DIR); upload it again' : `the uploaded sample could not be read: ${(err as Error).message}`);
	}
}
