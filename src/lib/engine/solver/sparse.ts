/**
 * Sparse kernels on one row of a compressed sparse row set: entries
 * indices[start..end) with values[start..end), or all ones when values is null.
 * No allocation; callers pass the dense vector.
 */

/** w·x for the row x = (indices, values)[start..end). */
export function dot(w: Float64Array, indices: Uint32Array, values: Float32Array | null, start: number, end: number): number {
	let s = 0;
	if (values === null) {
		for (let j = start; j < end; j++) s += w[indices[j]];
	} else {
		for (let j = start; j < end; j++) s += w[indices[j]] * values[j];
	}
	return s;
}

/** w += a·x for the row x = (indices, values)[start..end). */
export function axpy(a: number, indices: Uint32Array, values: Float32Array | null, start: number, end: number, w: Float64Array): void {
	if (values === null) {
		for (let j = start; j < end; j++) w[indices[j]] += a;
	} else {
		for (let j = start; j < end; j++) w[indices[j]] += a * values[j];
	}
}

/** ||x||² for the row x = values[start..end) (binary rows: the count of entries). */
export function squaredNorm(values: Float32Array | null, start: number, end: number): number {
	if (values === null) return end - start;
	let s = 0;
	for (let j = start; j < end; j++) s += values[j] * values[j];
	return s;
}

/** ||w||² of a dense vector. */
export function denseSquaredNorm(w: Float64Array): number {
	let s = 0;
	for (let j = 0; j < w.length; j++) s += w[j] * w[j];
	return s;
}
