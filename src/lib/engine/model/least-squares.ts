/**
 * Linear least squares with bounds on slopes, via mathjs: solve the normal equations
 * (XᵀX + λI)β = Xᵀy; a slope outside its bounds is pinned to the bound and the rest refitted.
 * The bounds carry the physics (e.g. more cache never needs more passes).
 */
import { lusolve, multiply, transpose, add, identity, inv, matrix, type Matrix } from 'mathjs';

/** y ≈ β₀ + Σ βⱼ xⱼ; `sd` is the residual standard deviation. */
export interface LinearFit {
	coef: number[];
	sd: number;
	points: number;
	/** columns whose slopes were fitted (not pinned), and (XᵀX)⁻¹ over [1, those columns]: the leverage of a new point */
	free?: number[];
	inverse?: number[][];
}

/** [lowest, highest] allowed slope of one column. */
export type SlopeBounds = [number, number];
export const FREE: SlopeBounds = [-Infinity, Infinity];

/** a tiny ridge keeps the system solvable when columns are nearly collinear */
const RIDGE = 1e-9;
/** columns spread less than this are treated as constant (calibration x are logs: 0.05 ≈ 5 %) */
const MIN_SPREAD = 0.05;

/** XᵀX + λI, the matrix of the normal equations */
const gram = (Xm: Matrix): Matrix => add(multiply(transpose(Xm), Xm), multiply(RIDGE, identity(Xm.size()[1]))) as Matrix;

/** rows of the design matrix [1, x…] and y, each scaled by √weight (weighted least squares) */
const weighted = (X: number[][], sw: number[]) => X.map((r, i) => r.map((v) => v * sw[i]));

function solve(X: number[][], y: number[]): number[] {
	const Xm = matrix(X);
	const b = multiply(transpose(Xm), matrix(y)) as Matrix;
	const sol = lusolve(gram(Xm), b) as Matrix;
	return (sol.toArray() as number[][]).map((r) => r[0]);
}

const weightedMean = (y: number[], w: number[]) => y.reduce((a, v, i) => a + v * w[i], 0) / w.reduce((a, v) => a + v, 0);

/**
 * Fit y on columns xs (one row per point). A column with no spread gets slope 0 (or its
 * bound when 0 is outside), so a ratio calibrated at a single value contributes no slope.
 * Columns are expected in log units (see MIN_SPREAD). `weights` (default all 1) make a
 * weighted fit; they are scaled to a mean of 1, so `sd` and the leverage keep their meaning
 * for a point of average weight.
 */
export function fitLinear(xs: number[][], y: number[], bounds: SlopeBounds[] = [], weights?: number[]): LinearFit {
	const m = xs[0]?.length ?? 0;
	const b = (j: number) => bounds[j] ?? FREE;
	const coef = new Array(m + 1).fill(0);
	if (y.length === 0) return { coef, sd: 0, points: 0 };
	const meanWeight = weights ? weights.reduce((a, v) => a + v, 0) / weights.length : 1;
	const w = y.map((_, i) => (weights ? weights[i] / meanWeight : 1));
	const sw = w.map(Math.sqrt);
	/** the weighted design matrix [1, x…] over the free columns */
	const design = (free: number[]) => weighted(xs.map((r) => [1, ...free.map((j) => r[j])]), sw);
	const pinned = new Map<number, number>();
	for (let j = 0; j < m; j++) {
		const col = xs.map((r) => r[j]);
		if (Math.max(...col) - Math.min(...col) <= MIN_SPREAD) pinned.set(j, Math.min(Math.max(0, b(j)[0]), b(j)[1]));
	}
	for (let round = 0; round <= m; round++) {
		const free = Array.from({ length: m }, (_, j) => j).filter((j) => !pinned.has(j));
		const yAdj = y.map((yi, i) => yi - [...pinned].reduce((s, [j, v]) => s + v * xs[i][j], 0));
		const beta = free.length + 1 <= y.length ? solve(design(free), yAdj.map((v, i) => v * sw[i])) : [weightedMean(yAdj, w), ...free.map(() => 0)];
		coef.fill(0);
		coef[0] = beta[0];
		free.forEach((j, i) => (coef[j + 1] = beta[i + 1]));
		for (const [j, v] of pinned) coef[j + 1] = v;
		const outside = free.filter((j) => coef[j + 1] < b(j)[0] || coef[j + 1] > b(j)[1]);
		if (outside.length === 0) break;
		for (const j of outside) pinned.set(j, Math.min(Math.max(coef[j + 1], b(j)[0]), b(j)[1]));
	}
	const resid = y.map((yi, i) => yi - evalLinear({ coef, sd: 0, points: 0 }, xs[i]));
	const dof = Math.max(1, y.length - 1 - (m - pinned.size));
	const free = Array.from({ length: m }, (_, j) => j).filter((j) => !pinned.has(j));
	const fit: LinearFit = { coef, sd: Math.sqrt(resid.reduce((a, r, i) => a + w[i] * r * r, 0) / dof), points: y.length };
	if (free.length + 1 <= y.length) {
		fit.free = free;
		fit.inverse = (inv(gram(matrix(design(free)))) as Matrix).toArray() as number[][];
	}
	return fit;
}

/**
 * Leverage h = x₀ᵀ(XᵀX)⁻¹x₀ of a new point: sd·√h is the standard error of the fitted value there
 * (the prediction interval of linear regression), which grows as x₀ leaves the calibrated points.
 * 0 when the fit had no free columns to invert.
 */
export function leverage(f: LinearFit, x: number[]): number {
	if (!f.inverse || !f.free) return 0;
	const v = [1, ...f.free.map((j) => x[j])];
	let h = 0;
	for (let a = 0; a < v.length; a++) for (let b = 0; b < v.length; b++) h += v[a] * f.inverse[a][b] * v[b];
	return Math.max(0, h);
}

export function evalLinear(f: LinearFit, x: number[]): number {
	let s = f.coef[0];
	for (let j = 0; j < x.length; j++) s += (f.coef[j + 1] ?? 0) * x[j];
	return s;
}
