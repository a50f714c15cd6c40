/**
 * Renumber features by popularity: the most frequent feature becomes 0, the next 1, and so on.
 * Sparse data puts most nonzeros on few features; when those sit scattered over a large w, every
 * update touches a different cache line and page. Packed together, the hot weights share lines
 * and stay in the caches. The solver does not need ascending indices inside a row, and the
 * objective is invariant under a permutation of the features, so only w has to be mapped back.
 * Each row is then sorted by its new indices again: ascending addresses within a row keep the
 * accesses to w on fewer pages (measured on 20 million features: 25–35 % less time per epoch
 * than renumbering alone, benchmarks/results/engine.md).
 * Cost: a counting pass, a remapping pass and a sort of each row, in place (no second copy of the rows).
 */
import type { SparseRows } from '../types.js';

/** Weight vectors smaller than this stay in the caches anyway; renumbering would not pay. */
export const RENUMBER_MIN_WEIGHT_BYTES = 4 << 20;

/** Whether a strategy renumbers the features of a dataset with d features (8 bytes of w each). */
export const renumbers = (d: number) => d * 8 >= RENUMBER_MIN_WEIGHT_BYTES;

/** newIndex[j] for every old feature j; counting sort, most frequent first, ties by old index. */
export function popularityOrder(indices: Uint32Array, d: number): Uint32Array {
	const count = new Uint32Array(d);
	for (let j = 0; j < indices.length; j++) count[indices[j]]++;
	let top = 0;
	for (let f = 0; f < d; f++) if (count[f] > top) top = count[f];
	// start[c] = first new index of the features seen c times (larger counts first)
	const start = new Float64Array(top + 2);
	for (let f = 0; f < d; f++) start[count[f]]++;
	let at = 0;
	for (let c = top; c >= 0; c--) {
		const size = start[c];
		start[c] = at;
		at += size;
	}
	const newIndex = new Uint32Array(d);
	for (let f = 0; f < d; f++) newIndex[f] = start[count[f]]++;
	return newIndex;
}

/** rows longer than this keep their order after renumbering (the sort key packs the position in 21 bits) */
const MAX_SORTED_ROW = 1 << 21;

/** Rewrite the rows' indices in place, each row sorted again; returns the map to undo it (see weightsInOldOrder). */
export function renumberByPopularity(rows: SparseRows): Uint32Array {
	const newIndex = popularityOrder(rows.indices, rows.d);
	const ix = rows.indices;
	for (let j = 0; j < ix.length; j++) ix[j] = newIndex[ix[j]];
	sortRows(rows);
	return newIndex;
}

/** Sort every row by index; values move with their index. */
function sortRows(rows: SparseRows): void {
	const { indices, values, rowPtr, n } = rows;
	if (values === null) {
		for (let i = 0; i < n; i++) indices.subarray(rowPtr[i], rowPtr[i + 1]).sort();
		return;
	}
	// real values: sort keys index · 2²¹ + position (exact in a double), then gather the values
	let longest = 0;
	for (let i = 0; i < n; i++) longest = Math.max(longest, rowPtr[i + 1] - rowPtr[i]);
	const keys = new Float64Array(Math.min(longest, MAX_SORTED_ROW));
	const vals = new Float32Array(keys.length);
	for (let i = 0; i < n; i++) {
		const start = rowPtr[i];
		const len = rowPtr[i + 1] - start;
		if (len < 2 || len > MAX_SORTED_ROW) continue;
		const k = keys.subarray(0, len);
		for (let j = 0; j < len; j++) {
			k[j] = indices[start + j] * MAX_SORTED_ROW + j;
			vals[j] = values[start + j];
		}
		k.sort();
		for (let j = 0; j < len; j++) {
			const pos = k[j] % MAX_SORTED_ROW;
			indices[start + j] = (k[j] - pos) / MAX_SORTED_ROW;
			values[start + j] = vals[pos];
		}
	}
}

/** w in the file's own feature order, from w in the renumbered order. */
export function weightsInOldOrder(w: Float64Array, newIndex: Uint32Array): Float64Array {
	const out = new Float64Array(w.length);
	for (let f = 0; f < newIndex.length; f++) out[f] = w[newIndex[f]];
	return out;
}
