/**
 * Renumber features by popularity: the most frequent feature becomes 0, the next 1, and so on.
 * Sparse data puts most nonzeros on few features; when those sit scattered over a large w, every
 * update touches a different cache line and page. Packed together, the hot weights share lines
 * and stay in the caches. The solver does not need ascending indices inside a row, and the
 * objective is invariant under a permutation of the features, so only w has to be mapped back.
 * Cost: one counting pass and one remapping pass over the nonzeros, O(d + nnz), in place.
 */
import type { SparseRows } from '../types.js';

/** Weight vectors smaller than this stay in the caches anyway; renumbering would not pay. */
export const RENUMBER_MIN_WEIGHT_BYTES = 4 << 20;

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

/** Rewrite the rows' indices in place; returns the map to undo it (see weightsInOldOrder). */
export function renumberByPopularity(rows: SparseRows): Uint32Array {
	const newIndex = popularityOrder(rows.indices, rows.d);
	const ix = rows.indices;
	for (let j = 0; j < ix.length; j++) ix[j] = newIndex[ix[j]];
	return newIndex;
}

/** w in the file's own feature order, from w in the renumbered order. */
export function weightsInOldOrder(w: Float64Array, newIndex: Uint32Array): Float64Array {
	const out = new Float64Array(w.length);
	for (let f = 0; f < newIndex.length; f++) out[f] = w[newIndex[f]];
	return out;
}
