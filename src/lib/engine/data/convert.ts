/** Text rows (svmlight) to Loadline binary rows: one pass to validate and profile, one to write. */
import { unlink } from 'node:fs/promises';
import { resolve } from 'node:path';
import type { ValueKind } from '../types.js';
import { BinaryRowWriter, type BinaryFileHeader } from './binary.js';
import { parseSvmlightFile } from './svmlight.js';
import type { DataProfile } from './stats.js';

export interface ConvertOptions {
	/** rows per binary chunk; default 1024 */
	chunkRows?: number;
	/** skip the first pass when the value kind is known; default: found by the first pass */
	valueKind?: ValueKind;
	/** rows written so far */
	onProgress?: (rowsDone: number) => void;
}

export async function convertSvmlightToBinary(
	input: string,
	output: string,
	opts: ConvertOptions = {}
): Promise<{ profile: DataProfile; header: BinaryFileHeader }> {
	if (resolve(input) === resolve(output)) throw new Error(`output ${output} is the input file`);
	// the first pass finds errors before any output exists, and the value kind the header needs
	const first = opts.valueKind ? null : await parseSvmlightFile(input);
	const valueKind = opts.valueKind ?? first!.valueKind;
	const writer = BinaryRowWriter.open(output, { valueKind, chunkRows: opts.chunkRows });
	const real = valueKind === 'real';
	try {
		const profile = await parseSvmlightFile(input, {
			onBatch: (b) => {
				for (let i = 0; i < b.n; i++) {
					const lo = b.rowPtr[i];
					const hi = b.rowPtr[i + 1];
					writer.writeRow(b.labels[i], b.indices.subarray(lo, hi), real ? b.values.subarray(lo, hi) : null);
				}
				opts.onProgress?.(b.firstRow + b.n);
			}
		});
		const header = await writer.close();
		return { profile: { ...profile, valueKind }, header };
	} catch (err) {
		writer.abort();
		await unlink(output).catch(() => {});
		throw err;
	}
}
