/**
 * Dual coordinate descent with shrinking for the L1-loss (hinge) and L2-loss (squared hinge) linear SVM.
 *
 *   min_α  f(α) = ½ αᵀ(Q + D)α − eᵀα   s.t. 0 ≤ αᵢ ≤ U,   Qᵢⱼ = yᵢyⱼ xᵢᵀxⱼ
 *   hinge: D = 0, U = C;  squared hinge: Dᵢᵢ = 1/(2C), U = ∞  (tables in losses.ts). No bias feature.
 * One coordinate step (closed form): G = yᵢ wᵀxᵢ − 1 + Dᵢᵢαᵢ,  αᵢ ← min(max(αᵢ − G/(‖xᵢ‖² + Dᵢᵢ), 0), U),
 * and w += (Δαᵢ) yᵢ xᵢ keeps w = Σ αᵢ yᵢ xᵢ. Random permutation each epoch; shrinking removes
 * examples at a bound whose projected gradient says they stay there, and re-checks all of them
 * once the shrunk problem has converged.
 * Inputs: a working set (rows, a view of their α, optional margin log), the shared w, loss, C, a uniform RNG.
 * Result: α and w updated in place; `updates` counts coordinate visits.
 * Follows Hsieh, Chang, Lin, Keerthi, Sundararajan, "A Dual Coordinate Descent Method for
 * Large-scale Linear SVM", ICML 2008, Algorithm 1 and Section 3 (shrinking), as liblinear does.
 */
import type { Loss, SparseRows } from '../types.js';
import { axpy, dot, squaredNorm } from './sparse.js';
import { lossTable } from './losses.js';

export type Rng = () => number;

/** Examples the solver works on, with views of their dual variables in the strategy's arrays. */
export interface WorkingSet {
	rows: SparseRows;
	/** αᵢ of the working-set rows (a view or a gathered copy) */
	alpha: Float64Array;
	/** logistic only: C − αᵢ, kept apart for precision near the bound */
	comp: Float64Array | null;
	/** optional: yᵢ wᵀxᵢ right after each example's own update (a running primal estimate) */
	margins: Float64Array | null;
}

/** What every coordinate solver offers the drivers. */
export interface CoordinateSolver {
	/** one pass over the active examples in random order */
	epoch(): void;
	/** coordinate visits so far */
	updates: number;
	/** the active set has met the current inner tolerance with no shrunk examples left */
	settled: boolean;
	/** lower the inner tolerance after the gap test failed; false when it cannot go lower */
	tighten(): boolean;
	/** the same rows, loaded again (block strategies keep a solver, and its shrinking state, per block) */
	reload(rows: SparseRows): void;
}

/** Inner tolerance on the projected-gradient spread to start with (liblinear's -e default) and its floor. */
const START_EPS = 0.1;
const MIN_EPS = 1e-12;

export class SvmDualCoordinateDescent implements CoordinateSolver {
	updates = 0;
	settled = false;
	private eps = START_EPS;
	private readonly qd: Float64Array;
	private readonly index: Uint32Array;
	private activeSize: number;
	private pgMaxOld = Infinity;
	private pgMinOld = -Infinity;
	private readonly diag: number;
	private readonly upper: number;

	constructor(
		private readonly ws: WorkingSet,
		private readonly w: Float64Array,
		loss: Loss,
		C: number,
		private readonly rng: Rng,
		private readonly shrinking = true,
		startEps = START_EPS
	) {
		this.eps = startEps;
		const { rows } = ws;
		const t = lossTable(loss, C);
		this.diag = t.diag;
		this.upper = t.upper;
		this.qd = new Float64Array(rows.n);
		this.index = new Uint32Array(rows.n);
		for (let i = 0; i < rows.n; i++) {
			this.qd[i] = squaredNorm(rows.values, rows.rowPtr[i], rows.rowPtr[i + 1]) + this.diag;
			this.index[i] = i;
		}
		this.activeSize = rows.n;
	}

	epoch(): void {
		const { labels, rowPtr, indices, values, n } = this.ws.rows;
		const { alpha, margins } = this.ws;
		const { w, qd, index, diag, upper, rng, shrinking } = this;
		let active = this.activeSize;
		const smallPtr = rowPtr[n] < 2 ** 31;
		for (let s = 0; s < active; s++) {
			const j = s + Math.floor(rng() * (active - s));
			const t = index[s];
			index[s] = index[j];
			index[j] = t;
		}
		let pgMax = -Infinity;
		let pgMin = Infinity;
		const pgMaxOld = this.pgMaxOld;
		const pgMinOld = this.pgMinOld;
		let visits = 0;
		for (let s = 0; s < active; s++) {
			const i = index[s];
			const yi = labels[i];
			// small int row offsets keep the kernels' loop counters in integer registers
			const start = smallPtr ? rowPtr[i] | 0 : rowPtr[i];
			const end = smallPtr ? rowPtr[i + 1] | 0 : rowPtr[i + 1];
			const m = yi * dot(w, indices, values, start, end);
			const a = alpha[i];
			const G = m - 1 + diag * a;
			visits++;
			let PG = 0;
			if (a === 0) {
				if (G > pgMaxOld && shrinking) {
					active--;
					index[s] = index[active];
					index[active] = i;
					s--;
					if (margins !== null) margins[i] = m;
					continue;
				}
				if (G < 0) PG = G;
			} else if (a === upper) {
				if (G < pgMinOld && shrinking) {
					active--;
					index[s] = index[active];
					index[active] = i;
					s--;
					if (margins !== null) margins[i] = m;
					continue;
				}
				if (G > 0) PG = G;
			} else {
				PG = G;
			}
			if (PG > pgMax) pgMax = PG;
			if (PG < pgMin) pgMin = PG;
			if (PG > 1e-12 || PG < -1e-12) {
				let na = a - G / qd[i];
				if (na < 0) na = 0;
				else if (na > upper) na = upper;
				alpha[i] = na;
				const da = na - a;
				axpy(da * yi, indices, values, start, end, w);
				if (margins !== null) margins[i] = m + da * (qd[i] - diag);
			} else if (margins !== null) {
				margins[i] = m;
			}
		}
		this.updates += visits;
		if (active === 0) {
			pgMax = 0;
			pgMin = 0;
		}
		if (pgMax - pgMin <= this.eps) {
			if (active === n) this.settled = true;
			else {
				active = n;
				this.pgMaxOld = Infinity;
				this.pgMinOld = -Infinity;
			}
		} else {
			this.pgMaxOld = pgMax <= 0 ? Infinity : pgMax;
			this.pgMinOld = pgMin >= 0 ? -Infinity : pgMin;
		}
		this.activeSize = active;
	}

	reload(rows: SparseRows): void {
		this.ws.rows = rows;
		// w moved while the block was out, so the examples shrunk on the last visit are re-examined
		if (rows.n > 0) {
			this.activeSize = rows.n;
			this.pgMaxOld = Infinity;
			this.pgMinOld = -Infinity;
			this.settled = false;
		}
	}

	tighten(): boolean {
		if (this.eps <= MIN_EPS) return false;
		this.eps *= 0.1;
		this.settled = false;
		this.activeSize = this.ws.rows.n;
		this.pgMaxOld = Infinity;
		this.pgMinOld = -Infinity;
		return true;
	}
}
