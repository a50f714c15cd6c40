/**
 * Exact objectives on rows held in RAM: the primal needs one pass of margins yᵢ wᵀxᵢ,
 * the dual needs only α and ‖w‖² (formulas in losses.ts).
 */
import type { Loss, SparseRows } from '../types.js';
import { denseSquaredNorm, dot } from './sparse.js';
import { dualTerm, lossAt, lossTable } from './losses.js';

/** Sums over a set of rows that add up across blocks: C-free loss sum and correct predictions. */
export interface MarginSums {
	lossSum: number;
	correct: number;
	rows: number;
}

export function emptySums(): MarginSums {
	return { lossSum: 0, correct: 0, rows: 0 };
}

/** Adds Σ ℓ(yᵢ wᵀxᵢ) and the count of correct signs of `rows` into `into`. */
export function addMargins(into: MarginSums, rows: SparseRows, w: Float64Array, loss: Loss): MarginSums {
	const { labels, rowPtr, indices, values, n } = rows;
	let lossSum = 0;
	let correct = 0;
	for (let i = 0; i < n; i++) {
		const wx = dot(w, indices, values, rowPtr[i], rowPtr[i + 1]);
		const y = labels[i];
		lossSum += lossAt(loss, y * wx);
		// liblinear's rule: decision value > 0 predicts +1
		if ((wx > 0 ? 1 : -1) === y) correct++;
	}
	into.lossSum += lossSum;
	into.correct += correct;
	into.rows += n;
	return into;
}

/** Σᵢ of the per-example dual terms over all n examples (unvisited logistic examples sit at α = 0). */
export function dualSum(loss: Loss, C: number, alpha: Float64Array, comp: Float64Array | null): number {
	let s = 0;
	if (comp === null) {
		for (let i = 0; i < alpha.length; i++) s += dualTerm(loss, C, alpha[i], 0);
	} else {
		for (let i = 0; i < alpha.length; i++) s += dualTerm(loss, C, alpha[i], comp[i]);
	}
	return s;
}

export function primalFrom(w: Float64Array, C: number, lossSum: number): number {
	return 0.5 * denseSquaredNorm(w) + C * lossSum;
}

export function dualFrom(loss: Loss, C: number, w: Float64Array, alpha: Float64Array, comp: Float64Array | null): number {
	return dualSum(loss, C, alpha, comp) - 0.5 * denseSquaredNorm(w);
}

/** Σ ℓ over a log of per-example margins: the running primal estimate of the out-of-core strategies. */
export function lossSumOfMargins(loss: Loss, margins: Float64Array): number {
	let s = 0;
	for (let i = 0; i < margins.length; i++) s += lossAt(loss, margins[i]);
	return s;
}

/**
 * Largest violation of the KKT conditions of the SVM dual, measured by the projected gradient
 * (αᵢ = 0 needs G ≥ 0, αᵢ = U needs G ≤ 0, in between G = 0, with G = yᵢwᵀxᵢ − 1 + Dᵢᵢαᵢ);
 * for logistic, |yᵢwᵀxᵢ + log(αᵢ/(C−αᵢ))| (Yu, Huang, Lin 2011, the optimality condition of each subproblem).
 */
export function kktViolation(rows: SparseRows, w: Float64Array, loss: Loss, C: number, alpha: Float64Array, comp: Float64Array | null): number {
	const { diag, upper } = lossTable(loss, C);
	let worst = 0;
	for (let i = 0; i < rows.n; i++) {
		const m = rows.labels[i] * dot(w, rows.indices, rows.values, rows.rowPtr[i], rows.rowPtr[i + 1]);
		const a = alpha[i];
		let v: number;
		if (loss === 'logistic') {
			const c = comp === null ? C - a : comp[i];
			v = Math.abs(m + Math.log(a / c));
		} else {
			const G = m - 1 + diag * a;
			v = a === 0 ? Math.max(0, -G) : a === upper ? Math.max(0, G) : Math.abs(G);
		}
		if (v > worst) worst = v;
	}
	return worst;
}
