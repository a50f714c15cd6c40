/**
 * Sparse kernels on one row of a compressed sparse row set: entries
 * indices[start..end) with values[start..end), or all ones when values is null.
 * No allocation; callers pass the dense vector. Offsets below 2³¹ take an integer loop
 * (a double loop counter costs a conversion per entry). dot keeps four partial sums and axpy
 * does four updates per step, so the accesses to w, which miss the cache once w is large,
 * overlap instead of queuing behind one dependency chain.
 */

const INT_LIMIT = 2 ** 31 - 1;

/** w·x for the row x = (indices, values)[start..end). */
export function dot(w: Float64Array, indices: Uint32Array, values: Float32Array | null, start: number, end: number): number {
	if (end > INT_LIMIT) return dotWide(w, indices, values, start, end);
	const b = end | 0;
	let j = start | 0;
	let s0 = 0;
	let s1 = 0;
	let s2 = 0;
	let s3 = 0;
	if (values === null) {
		for (; j + 3 < b; j += 4) {
			s0 += w[indices[j]];
			s1 += w[indices[j + 1]];
			s2 += w[indices[j + 2]];
			s3 += w[indices[j + 3]];
		}
		for (; j < b; j++) s0 += w[indices[j]];
	} else {
		for (; j + 3 < b; j += 4) {
			s0 += w[indices[j]] * values[j];
			s1 += w[indices[j + 1]] * values[j + 1];
			s2 += w[indices[j + 2]] * values[j + 2];
			s3 += w[indices[j + 3]] * values[j + 3];
		}
		for (; j < b; j++) s0 += w[indices[j]] * values[j];
	}
	return s0 + s1 + (s2 + s3);
}

function dotWide(w: Float64Array, indices: Uint32Array, values: Float32Array | null, start: number, end: number): number {
	let s = 0;
	if (values === null) for (let j = start; j < end; j++) s += w[indices[j]];
	else for (let j = start; j < end; j++) s += w[indices[j]] * values[j];
	return s;
}

/** w += a·x for the row x = (indices, values)[start..end). */
export function axpy(a: number, indices: Uint32Array, values: Float32Array | null, start: number, end: number, w: Float64Array): void {
	if (end > INT_LIMIT) {
		if (values === null) for (let j = start; j < end; j++) w[indices[j]] += a;
		else for (let j = start; j < end; j++) w[indices[j]] += a * values[j];
		return;
	}
	const b = end | 0;
	let j = start | 0;
	// four independent read-modify-writes per step, so their cache misses overlap (as in dot)
	if (values === null) {
		for (; j + 3 < b; j += 4) {
			const i0 = indices[j];
			const i1 = indices[j + 1];
			const i2 = indices[j + 2];
			const i3 = indices[j + 3];
			w[i0] += a;
			w[i1] += a;
			w[i2] += a;
			w[i3] += a;
		}
		for (; j < b; j++) w[indices[j]] += a;
	} else {
		for (; j + 3 < b; j += 4) {
			const i0 = indices[j];
			const i1 = indices[j + 1];
			const i2 = indices[j + 2];
			const i3 = indices[j + 3];
			w[i0] += a * values[j];
			w[i1] += a * values[j + 1];
			w[i2] += a * values[j + 2];
			w[i3] += a * values[j + 3];
		}
		for (; j < b; j++) w[indices[j]] += a * values[j];
	}
}

/** ‖x‖² for the row x = values[start..end) (binary rows: the count of entries). */
export function squaredNorm(values: Float32Array | null, start: number, end: number): number {
	if (values === null) return end - start;
	let s = 0;
	for (let j = start; j < end; j++) s += values[j] * values[j];
	return s;
}

/** ‖w‖² of a dense vector. */
export function denseSquaredNorm(w: Float64Array): number {
	let s = 0;
	for (let j = 0; j < w.length; j++) s += w[j] * w[j];
	return s;
}
