/**
 * Linear least squares with bounds on slopes, via mathjs: solve the normal equations
 * (XᵀX + λI)β = Xᵀy; a slope outside its bounds is pinned to the bound and the rest refitted.
 * The bounds carry the physics (e.g. more cache never needs more passes).
 */
import { lusolve, multiply, transpose, add, identity, matrix, type Matrix } from 'mathjs';

/** y ≈ β₀ + Σ βⱼ xⱼ; `sd` is the residual standard deviation. */
export interface LinearFit {
	coef: number[];
	sd: number;
	points: number;
}

/** [lowest, highest] allowed slope of one column. */
export type SlopeBounds = [number, number];
export const FREE: SlopeBounds = [-Infinity, Infinity];

/** a tiny ridge keeps the system solvable when columns are nearly collinear */
const RIDGE = 1e-9;
/** columns spread less than this are treated as constant (calibration x are logs: 0.05 ≈ 5 %) */
const MIN_SPREAD = 0.05;

function solve(X: number[][], y: number[]): number[] {
	const Xm = matrix(X);
	const Xt = transpose(Xm);
	const A = add(multiply(Xt, Xm), multiply(RIDGE, identity(X[0].length))) as Matrix;
	const b = multiply(Xt, matrix(y)) as Matrix;
	const sol = lusolve(A, b) as Matrix;
	return (sol.toArray() as number[][]).map((r) => r[0]);
}

const mean = (y: number[]) => y.reduce((a, b) => a + b, 0) / y.length;

/**
 * Fit y on columns xs (one row per point). A column with no spread gets slope 0 (or its
 * bound when 0 is outside), so a ratio calibrated at a single value contributes no slope.
 * Columns are expected in log units (see MIN_SPREAD).
 */
export function fitLinear(xs: number[][], y: number[], bounds: SlopeBounds[] = []): LinearFit {
	const m = xs[0]?.length ?? 0;
	const b = (j: number) => bounds[j] ?? FREE;
	const coef = new Array(m + 1).fill(0);
	if (y.length === 0) return { coef, sd: 0, points: 0 };
	const pinned = new Map<number, number>();
	for (let j = 0; j < m; j++) {
		const col = xs.map((r) => r[j]);
		if (Math.max(...col) - Math.min(...col) <= MIN_SPREAD) pinned.set(j, Math.min(Math.max(0, b(j)[0]), b(j)[1]));
	}
	for (let round = 0; round <= m; round++) {
		const free = Array.from({ length: m }, (_, j) => j).filter((j) => !pinned.has(j));
		const yAdj = y.map((yi, i) => yi - [...pinned].reduce((s, [j, v]) => s + v * xs[i][j], 0));
		const beta = free.length + 1 <= y.length ? solve(xs.map((r) => [1, ...free.map((j) => r[j])]), yAdj) : [mean(yAdj), ...free.map(() => 0)];
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
	return { coef, sd: Math.sqrt(resid.reduce((a, r) => a + r * r, 0) / dof), points: y.length };
}

export function evalLinear(f: LinearFit, x: number[]): number {
	let s = f.coef[0];
	for (let j = 0; j < x.length; j++) s += (f.coef[j + 1] ?? 0) * x[j];
	return s;
}
