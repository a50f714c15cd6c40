/**
 * Per-update cost of the sparse coordinate step (dot, then axpy) on rows shaped like a
 * dataset: k nonzeros per row, indices uniform over d features, so the weight vector
 * sits where a real run puts it in the memory hierarchy.
 */
import { Random } from '../data/random.js';
import { axpy, dot, squaredNorm } from '../solver/sparse.js';
import type { KernelPoint } from './record.js';

/** nonzeros in the default measured row set (2–4 MiB of rows, about what a calibration run holds) */
export const KERNEL_NNZ = 1 << 19;

/**
 * Measure ns per coordinate update at (k, d) for about `seconds` of work. `rowBytes` sizes the
 * row set (default KERNEL_NNZ nonzeros): rows beyond the CPU caches cost more per update.
 * `visit: true` makes each update a dual coordinate descent visit as the solver makes it: rows in
 * a fresh random permutation each sweep, found through a row-pointer array, with the example's
 * label, dual variable and squared norm read and written beside the row. Those per-example
 * arrays miss the caches too once a dataset is large, so the visit's stalls grow faster with
 * the row set than the bare dot + axpy of the reference kernel.
 */
export function measureKernel(
	nnzPerRow: number,
	features: number,
	opts: { real?: boolean; seconds?: number; seed?: number; rowBytes?: number; visit?: boolean } = {}
): KernelPoint {
	const k = Math.max(1, Math.min(features, Math.round(nnzPerRow)));
	const perNnz = opts.real === false ? 4 : 8;
	const nnzTotal = opts.rowBytes === undefined ? KERNEL_NNZ : Math.max(k * 64, Math.floor(opts.rowBytes / perNnz));
	const rows = Math.max(64, Math.floor(nnzTotal / k));
	const rng = new Random(opts.seed ?? 1);
	const indices = new Uint32Array(rows * k);
	for (let j = 0; j < indices.length; j++) indices[j] = rng.int(features);
	const values = opts.real === false ? null : new Float32Array(rows * k).map(() => rng.next());
	const order = new Uint32Array(rows);
	for (let i = 0; i < rows; i++) order[i] = opts.visit ? i : rng.int(rows);
	const w = new Float64Array(features);
	const budgetMs = (opts.seconds ?? 0.05) * 1000;
	let updates = 0;
	let sink = 0;
	const bare = () => {
		for (let t = 0; t < rows; t++) {
			const i = order[t];
			const g = dot(w, indices, values, i * k, i * k + k) - 1;
			sink += g;
			axpy(g > 0 ? -1e-3 : 1e-3, indices, values, i * k, i * k + k, w);
		}
	};
	const sweep = opts.visit ? visitSweep(rows, k, indices, values, w, order, rng) : bare;
	// warm up once, then time whole sweeps until the budget is spent
	sweep();
	const t0 = performance.now();
	let elapsed = 0;
	do {
		sweep();
		updates += rows;
		elapsed = performance.now() - t0;
	} while (elapsed < budgetMs);
	if (!Number.isFinite(sink) || !w.every(Number.isFinite)) throw new Error('kernel diverged');
	return { nnzPerRow: k, features, nsPerUpdate: (elapsed * 1e6) / updates, rowBytes: rows * k * perNnz };
}

/** One sweep of hinge-loss dual coordinate descent (C = 1) over rows of k nonzeros, laid out as the solver keeps them. */
function visitSweep(rows: number, k: number, indices: Uint32Array, values: Float32Array | null, w: Float64Array, order: Uint32Array, rng: Random): () => void {
	const rowPtr = new Float64Array(rows + 1);
	for (let i = 0; i <= rows; i++) rowPtr[i] = i * k;
	const labels = new Int8Array(rows).map(() => (rng.next() < 0.5 ? 1 : -1));
	const alpha = new Float64Array(rows);
	const qd = new Float64Array(rows);
	for (let i = 0; i < rows; i++) qd[i] = squaredNorm(values, i * k, i * k + k) || 1;
	return () => {
		for (let s = 0; s < rows; s++) {
			const j = s + Math.floor(rng.next() * (rows - s));
			const t = order[s];
			order[s] = order[j];
			order[j] = t;
		}
		for (let s = 0; s < rows; s++) {
			const i = order[s];
			const start = rowPtr[i] | 0;
			const end = rowPtr[i + 1] | 0;
			const y = labels[i];
			const G = y * dot(w, indices, values, start, end) - 1;
			const a = alpha[i];
			let na = a - G / qd[i];
			if (na < 0) na = 0;
			else if (na > 1) na = 1;
			alpha[i] = na;
			// every visit pays the axpy, as a full update does
			axpy((na - a) * y, indices, values, start, end, w);
		}
	};
}

/** The fixed kernel that defines relative core speed: k = 32, d = 65536 (w of 512 KiB), real values. */
export const REFERENCE_KERNEL = { nnzPerRow: 32, features: 65536 } as const;
/** ns per update of the reference kernel on a core of speed 1 (this project's development machine, measured). */
export const REFERENCE_NS_PER_UPDATE = 400;

/** Relative core speed of the machine running this: reference cost over measured cost. */
export function measureCoreSpeed(seconds = 0.2): { coreSpeed: number; nsPerUpdate: number } {
	const p = measureKernel(REFERENCE_KERNEL.nnzPerRow, REFERENCE_KERNEL.features, { seconds });
	return { coreSpeed: REFERENCE_NS_PER_UPDATE / p.nsPerUpdate, nsPerUpdate: p.nsPerUpdate };
}
