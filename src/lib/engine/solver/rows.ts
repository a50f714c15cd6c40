/** Row-set helpers the out-of-core strategies share: slicing, joining, and counting resident bytes. */
import type { SparseRows } from '../types.js';

/**
 * RAM a working set of n rows and nnz nonzeros takes: labels (1 B), row pointers (8 B),
 * the solver's diagonal (8 B) and order (4 B) per row; 4 B per index and 4 B per value.
 */
export function workingSetBytes(n: number, nnz: number, real: boolean): number {
	return n * 21 + 8 + nnz * (real ? 8 : 4);
}

export function rowsBytes(rows: SparseRows): number {
	return workingSetBytes(rows.n, rows.rowPtr[rows.n], rows.values !== null);
}

/** Rows [from, to) of `rows` as a set of their own (copies). */
export function sliceRows(rows: SparseRows, from: number, to: number): SparseRows {
	const a = rows.rowPtr[from];
	const b = rows.rowPtr[to];
	const rowPtr = new Float64Array(to - from + 1);
	for (let i = from; i <= to; i++) rowPtr[i - from] = rows.rowPtr[i] - a;
	return {
		n: to - from,
		d: rows.d,
		labels: rows.labels.slice(from, to),
		rowPtr,
		indices: rows.indices.slice(a, b),
		values: rows.values ? rows.values.slice(a, b) : null
	};
}

/** The rows of `parts` one after another, optionally only those where keep(part, row) is true. */
export function joinRows(parts: SparseRows[], d: number, keep?: (part: number, row: number) => boolean): SparseRows {
	let n = 0;
	let nnz = 0;
	const real = parts.some((p) => p.values !== null);
	for (let p = 0; p < parts.length; p++) {
		const r = parts[p];
		for (let i = 0; i < r.n; i++) {
			if (keep && !keep(p, i)) continue;
			n++;
			nnz += r.rowPtr[i + 1] - r.rowPtr[i];
		}
	}
	const labels = new Int8Array(n);
	const rowPtr = new Float64Array(n + 1);
	const indices = new Uint32Array(nnz);
	const values = real ? new Float32Array(nnz) : null;
	let row = 0;
	let at = 0;
	for (let p = 0; p < parts.length; p++) {
		const r = parts[p];
		for (let i = 0; i < r.n; i++) {
			if (keep && !keep(p, i)) continue;
			const s = r.rowPtr[i];
			const e = r.rowPtr[i + 1];
			labels[row] = r.labels[i];
			indices.set(r.indices.subarray(s, e), at);
			if (values) {
				if (r.values) values.set(r.values.subarray(s, e), at);
				else values.fill(1, at, at + e - s);
			}
			at += e - s;
			rowPtr[++row] = at;
		}
	}
	return { n, d, labels, rowPtr, indices, values };
}
