/**
 * The three losses of an L2-regularized linear classifier, as the dual solvers see them.
 *
 * Primal  P(w) = ½‖w‖² + C Σᵢ ℓ(yᵢ wᵀxᵢ), no bias feature (matches liblinear-train's default -B -1).
 *   hinge    ℓ(m) = max(0, 1 − m)            dual box 0 ≤ αᵢ ≤ C,   Dᵢᵢ = 0
 *   sqhinge  ℓ(m) = max(0, 1 − m)²           dual box 0 ≤ αᵢ < ∞,   Dᵢᵢ = 1/(2C)
 *   logistic ℓ(m) = log(1 + e^(−m))          dual box 0 ≤ αᵢ ≤ C (entropy terms keep it inside)
 * Dual (maximized), with w(α) = Σᵢ αᵢ yᵢ xᵢ:
 *   hinge    D(α) = Σ αᵢ − ½‖w‖²
 *   sqhinge  D(α) = Σ αᵢ − ½‖w‖² − Σ αᵢ²/(4C)
 *   logistic D(α) = −½‖w‖² − Σ [αᵢ log αᵢ + (C−αᵢ) log(C−αᵢ)] + n C log C
 * Weak duality D(α) ≤ P(w) holds for every feasible α and every w; the relative gap is (P − D)/P (P > 0 always).
 */
import type { Loss } from '../types.js';

/** Per-loss table driving the shared coordinate-descent loop (Hsieh et al., ICML 2008, Algorithm 1). */
export interface LossTable {
	/** Dᵢᵢ added to ‖xᵢ‖² on the diagonal */
	diag: number;
	/** upper bound U of each αᵢ */
	upper: number;
}

export function lossTable(loss: Loss, C: number): LossTable {
	if (loss === 'hinge') return { diag: 0, upper: C };
	if (loss === 'sqhinge') return { diag: 0.5 / C, upper: Infinity };
	return { diag: 0, upper: C };
}

/** ℓ(m) for the margin m = y wᵀx. */
export function lossAt(loss: Loss, m: number): number {
	if (loss === 'hinge') return m < 1 ? 1 - m : 0;
	if (loss === 'sqhinge') return m < 1 ? (1 - m) * (1 - m) : 0;
	// log(1 + e^(−m)) without overflow for large |m|
	return m > 0 ? Math.log1p(Math.exp(-m)) : -m + Math.log1p(Math.exp(m));
}

/** t log t with 0 log 0 = 0. */
function xlogx(t: number): number {
	return t > 0 ? t * Math.log(t) : 0;
}

/**
 * The per-example part of the dual objective (everything but −½‖w‖²).
 * For logistic, `comp` is C − α kept separately for precision near the bound.
 */
export function dualTerm(loss: Loss, C: number, a: number, comp: number): number {
	if (loss === 'hinge') return a;
	if (loss === 'sqhinge') return a - (a * a) / (4 * C);
	return -(xlogx(a) + xlogx(comp)) + C * Math.log(C);
}

/** Relative duality gap (P − D)/|P|; 0 when both are 0. */
export function relativeGap(primal: number, dual: number): number {
	const scale = Math.abs(primal);
	return scale > 0 ? (primal - dual) / scale : 0;
}
