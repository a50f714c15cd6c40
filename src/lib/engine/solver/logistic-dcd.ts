/**
 * Dual coordinate descent for L2-regularized logistic regression, with a Newton method on each
 * one-variable subproblem.
 *
 *   min_α  ½ αᵀQα + Σᵢ [αᵢ log αᵢ + (C−αᵢ) log(C−αᵢ)]   s.t. 0 ≤ αᵢ ≤ C,   Qᵢⱼ = yᵢyⱼ xᵢᵀxⱼ.  No bias feature.
 * Subproblem for example i, in whichever of z = αᵢ or z = C − αᵢ is expected to be the smaller
 * (s = ±1 accordingly, z₀ its current value, b = yᵢ wᵀxᵢ, a = ‖xᵢ‖²):
 *   g(z) = z log z + (C−z) log(C−z) + ½ a (z − z₀)² + s b (z − z₀),   0 < z < C,
 * solved by Newton steps z ← z − g′/g″, falling back to z ← ξz (ξ = 0.1) when a step leaves (0, C).
 * Examples start at α = 0 (w = 0) and take αᵢ = min(10⁻³C, 10⁻⁸) on their first visit, so a
 * strategy never needs a pass just to initialise w. No shrinking (as in the reference solver).
 * Inputs: a working set with α and C − α views, the shared w, C, a uniform RNG.
 * Result: α, C − α and w updated in place.
 * Follows Yu, Huang, Lin, "Dual coordinate descent methods for logistic regression and maximum
 * entropy models", Machine Learning 85 (2011), Algorithm 5.
 */
import type { SparseRows } from '../types.js';
import { axpy, dot, squaredNorm } from './sparse.js';
import type { CoordinateSolver, Rng, WorkingSet } from './dcd.js';

const MAX_INNER = 100;
/** scratch for newtonStep's results, so the hot loop allocates nothing */
const step = new Float64Array(3);
const ETA = 0.1;
const MIN_INNER_EPS = 1e-12;

export class LogisticDualCoordinateDescent implements CoordinateSolver {
	updates = 0;
	settled = false;
	/** inner Newton tolerance on |g′|, lowered as the outer iterations proceed */
	private innerEps = 1e-2;
	private readonly xsq: Float64Array;
	private readonly index: Uint32Array;
	private readonly comp: Float64Array;
	private lastGmax = Infinity;

	constructor(
		private readonly ws: WorkingSet,
		private readonly w: Float64Array,
		private readonly C: number,
		private readonly rng: Rng
	) {
		const rows: SparseRows = ws.rows;
		if (ws.comp === null) throw new Error('logistic solver needs the C − α array');
		this.comp = ws.comp;
		this.xsq = new Float64Array(rows.n);
		this.index = new Uint32Array(rows.n);
		for (let i = 0; i < rows.n; i++) {
			this.xsq[i] = squaredNorm(rows.values, rows.rowPtr[i], rows.rowPtr[i + 1]);
			this.index[i] = i;
		}
	}

	epoch(): void {
		const { labels, rowPtr, indices, values, n } = this.ws.rows;
		const { alpha, margins } = this.ws;
		const { w, xsq, index, rng, C, comp } = this;
		const innerEps = this.innerEps;
		const alphaStart = logisticStart(C);
		for (let s = 0; s < n; s++) {
			const j = s + Math.floor(rng() * (n - s));
			const t = index[s];
			index[s] = index[j];
			index[j] = t;
		}
		let gMax = 0;
		let newtonSteps = 0;
		// small int row offsets keep the kernels' loop counters in integer registers
		const smallPtr = rowPtr[n] < 2 ** 31;
		for (let s = 0; s < n; s++) {
			const i = index[s];
			const yi = labels[i];
			const start = smallPtr ? rowPtr[i] | 0 : rowPtr[i];
			const end = smallPtr ? rowPtr[i + 1] | 0 : rowPtr[i + 1];
			const a = xsq[i];
			if (alpha[i] === 0 && comp[i] === C) {
				// first visit: step inside the open box so the log terms are defined
				alpha[i] = alphaStart;
				comp[i] = C - alphaStart;
				axpy(alphaStart * yi, indices, values, start, end, w);
			}
			const b = yi * dot(w, indices, values, start, end);
			const ai = alpha[i];
			const g = newtonStep(a, b, ai, comp[i], C, innerEps, step);
			if (g > gMax) gMax = g;
			newtonSteps += step[2];
			alpha[i] = step[0];
			comp[i] = step[1];
			const da = step[0] - ai;
			if (da !== 0) axpy(da * yi, indices, values, start, end, w);
			if (margins !== null) margins[i] = b + da * a;
		}
		this.updates += n;
		// as the reference solver: tighten the Newton tolerance once few Newton steps are needed
		if (newtonSteps <= n / 10) this.innerEps = Math.max(MIN_INNER_EPS, 0.1 * this.innerEps);
		this.settled = gMax <= 1e-10 || (gMax < this.innerEps && this.innerEps <= MIN_INNER_EPS);
		this.lastGmax = gMax;
	}

	reload(rows: SparseRows): void {
		this.ws.rows = rows;
	}

	tighten(): boolean {
		if (this.innerEps <= MIN_INNER_EPS && this.lastGmax <= 1e-10) return false;
		this.innerEps = Math.max(MIN_INNER_EPS, 0.1 * this.innerEps);
		this.settled = false;
		return true;
	}
}

/**
 * One subproblem (header): given a = ‖xᵢ‖², b = yᵢwᵀxᵢ, the current αᵢ and C − αᵢ, write the new
 * αᵢ, C − αᵢ and the Newton step count into out[0..2]; returns |g′| at the start (the violation).
 */
export function newtonStep(a: number, b: number, ai: number, ci: number, C: number, innerEps: number, out: Float64Array): number {
	// solve in the variable whose optimum lies in (0, C/2]: g′ of αᵢ at C/2 decides
	const sign = 0.5 * a * (ci - ai) + b < 0 ? -1 : 1;
	const z0 = sign > 0 ? ai : ci;
	let z = z0;
	if (C - z < 0.5 * C) z = 0.1 * z;
	let gp = a * (z - z0) + sign * b + Math.log(z / (C - z));
	const violation = Math.abs(gp);
	let inner = 0;
	while (inner <= MAX_INNER) {
		if (Math.abs(gp) < innerEps) break;
		const gpp = a + C / (C - z) / z;
		const tz = z - gp / gpp;
		if (tz <= 0) z *= ETA;
		else if (tz >= C) z = 0.5 * (z + C);
		else z = tz;
		gp = a * (z - z0) + sign * b + Math.log(z / (C - z));
		inner++;
	}
	if (z === z0) {
		out[0] = ai;
		out[1] = ci;
	} else if (sign > 0) {
		out[0] = z;
		out[1] = C - z;
	} else {
		out[0] = C - z;
		out[1] = z;
	}
	out[2] = inner;
	return violation;
}

/** αᵢ an example takes on its first visit: inside the open box, near the α = 0 it started from. */
export function logisticStart(C: number): number {
	return Math.min(1e-3 * C, 1e-8);
}
