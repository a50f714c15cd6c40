/** Profile statistics of a dataset file in either form, told apart by the binary magic. */
import { open, stat } from 'node:fs/promises';
import { BINARY_MAGIC, readBinaryHeader, readBinaryChunkViews } from './binary.js';
import { parseSvmlightFile } from './svmlight.js';
import { ProfileStats, type DataProfile } from './stats.js';

export type RowFileFormat = 'svm' | 'bin';

/** 'bin' when the file starts with the binary row magic, else 'svm'. */
export async function detectFormat(path: string): Promise<RowFileFormat> {
	const fh = await open(path, 'r');
	try {
		const head = new Uint8Array(BINARY_MAGIC.length);
		const { bytesRead } = await fh.read(head, 0, head.length, 0);
		const magic = String.fromCharCode(...head.subarray(0, bytesRead));
		return magic === BINARY_MAGIC ? 'bin' : 'svm';
	} finally {
		await fh.close();
	}
}

/** Binary rows: n, nnz and value kind from the header; spread, positives and max index from one pass. */
export async function profileBinary(path: string): Promise<DataProfile> {
	const header = await readBinaryHeader(path);
	const stats = new ProfileStats();
	for await (const c of readBinaryChunkViews(path)) {
		let at = 0;
		for (let i = 0; i < c.rows; i++) {
			const len = c.lengths[i];
			at += len;
			stats.add(c.labels[i], len, len > 0 ? c.indices[at - 1] : -1);
		}
	}
	const { size } = await stat(path);
	return stats.finish(size, 'bin', header.valueKind);
}

export async function profileFile(path: string): Promise<DataProfile> {
	return (await detectFormat(path)) === 'bin' ? profileBinary(path) : parseSvmlightFile(path);
}
