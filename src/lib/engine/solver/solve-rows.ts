/**
 * In-memory driver: dual coordinate descent on rows held in RAM until the relative duality gap
 * (P − D)/P ≤ tol or the epoch limit. The gap is computed after every epoch: the dual from α and
 * the maintained w, the primal from one pass of margins. No bias feature.
 * Returns w, α, primal, dual, gap, epochs, coordinate updates, training accuracy and a gap trace.
 * Solvers: dcd.ts (hinge, squared hinge; Hsieh et al. 2008), logistic-dcd.ts (Yu, Huang, Lin 2011).
 */
import type { Loss, SparseRows } from '../types.js';
import { Random } from '../data/random.js';
import { SvmDualCoordinateDescent, type CoordinateSolver, type Rng, type WorkingSet } from './dcd.js';
import { LogisticDualCoordinateDescent } from './logistic-dcd.js';
import { addMargins, dualFrom, emptySums, primalFrom } from './objective.js';
import { relativeGap } from './losses.js';

export function createSolver(ws: WorkingSet, w: Float64Array, loss: Loss, C: number, rng: Rng, shrinking = true, startEps?: number): CoordinateSolver {
	return loss === 'logistic' ? new LogisticDualCoordinateDescent(ws, w, C, rng) : new SvmDualCoordinateDescent(ws, w, loss, C, rng, shrinking, startEps);
}

export function seededRng(seed: number): Rng {
	const r = new Random(seed);
	return () => r.next();
}

export interface RowsSolveOptions {
	loss: Loss;
	C: number;
	tol: number;
	maxEpochs: number;
	seed: number;
	shrinking?: boolean;
	/**
	 * stop as liblinear-train -e ε does for the SVM duals (projected-gradient spread over all examples ≤ ε)
	 * and evaluate the gap only at the end: for like-for-like benchmarks
	 */
	referenceStop?: number;
	onEpoch?: (p: { seconds: number; gap: number; epochs: number }) => void;
}

export interface RowsSolution {
	w: Float64Array;
	alpha: Float64Array;
	comp: Float64Array | null;
	primal: number;
	dual: number;
	gap: number;
	epochs: number;
	updates: number;
	accuracy: number;
	trace: { seconds: number; gap: number }[];
	/** seconds in coordinate updates alone, and in the per-epoch gap evaluation */
	updateSeconds: number;
	gapSeconds: number;
}

export function solveRows(rows: SparseRows, o: RowsSolveOptions): RowsSolution {
	const w = new Float64Array(rows.d);
	const alpha = new Float64Array(rows.n);
	const comp = o.loss === 'logistic' ? new Float64Array(rows.n).fill(o.C) : null;
	const solver = createSolver({ rows, alpha, comp, margins: null }, w, o.loss, o.C, seededRng(o.seed), o.shrinking ?? true, o.referenceStop);
	const t0 = performance.now();
	const trace: { seconds: number; gap: number }[] = [];
	let updateMs = 0;
	let gapMs = 0;
	let epochs = 0;
	let primal = NaN;
	let dual = NaN;
	let gap = Infinity;
	let accuracy = 0;
	const evaluate = () => {
		const t = performance.now();
		const sums = addMargins(emptySums(), rows, w, o.loss);
		primal = primalFrom(w, o.C, sums.lossSum);
		dual = dualFrom(o.loss, o.C, w, alpha, comp);
		gap = relativeGap(primal, dual);
		accuracy = rows.n > 0 ? sums.correct / rows.n : 0;
		gapMs += performance.now() - t;
	};
	while (epochs < o.maxEpochs) {
		const t = performance.now();
		solver.epoch();
		updateMs += performance.now() - t;
		epochs++;
		if (o.referenceStop !== undefined) {
			if (solver.settled) break;
			continue;
		}
		evaluate();
		const seconds = (performance.now() - t0) / 1000;
		trace.push({ seconds, gap });
		o.onEpoch?.({ seconds, gap, epochs });
		if (gap <= o.tol) break;
		// the shrunk and then the full problem met the inner tolerance but the gap did not: ask for more
		if (solver.settled && !solver.tighten()) break;
	}
	if (epochs === 0 || o.referenceStop !== undefined) evaluate();
	return { w, alpha, comp, primal, dual, gap, epochs, updates: solver.updates, accuracy, trace, updateSeconds: updateMs / 1000, gapSeconds: gapMs / 1000 };
}
