/**
 * Fit the capacity model on a calibration record. Per strategy, log-linear curves in
 * x = [1 − n₀/rows, ln cacheFraction, ln updatesPerRead] for passes, updates per row and miss rate
 * (1 − cacheHitRate), plus the ratios that carry measured time to other machines: compute
 * time per kernel-predicted update, read time per modelled read, overlap and fixed overhead.
 * Slope bounds encode what must hold physically so predictions stay monotone.
 */
import type { CalibrationRecord, CalibrationRun, KernelPoint } from '../calibrate/record.js';
import type { StrategyName } from '../types.js';
import { fitLinear, evalLinear, FREE, type LinearFit, type SlopeBounds } from './least-squares.js';
import { cachedRowsBytes } from './sizes.js';
import { stateBytes } from '../solver/meter.js';

/** ns per update = a + b·k at one feature dimension. */
export interface KernelLine {
	lnD: number;
	a: number;
	b: number;
}

export interface StrategyFit {
	strategy: StrategyName;
	runs: number;
	passes: LinearFit;
	epochs: LinearFit;
	updatesPerRow: LinearFit;
	missRate: LinearFit;
	/** measured compute seconds over kernel-predicted seconds (median over runs) */
	costRatio: number;
	/** read rate when decoding is the limit (unthrottled runs), bytes/s on the calibration machine */
	decodeBps: number;
	/** measured read seconds over passes × bytes ÷ throttle in throttled runs (above 1: preparation writes, request overhead; below 1: less than a whole file read per counted pass) */
	throttleRatio: number;
	/** share of min(read, compute) hidden by overlap */
	overlap: number;
	overheadSeconds: number;
	/** seconds per row per pass spent outside the read and compute timers (block and selective join working sets, estimate gaps), on the calibration machine */
	secondsPerRowPass: number;
	/** relative spread (sd of ln wall) between repeated seeds */
	seedSpread: number;
	/** largest rows calibrated */
	rowsMax: number;
	/** smallest rows calibrated: smaller plans are read at this term, since the curves say nothing below it */
	rowsMin: number;
	/** calibrated [min, max] of the cache fraction and of updates per read */
	fractionRange: [number, number];
	updatesPerReadRange: [number, number];
}

/** Kernel ns per update at the plan's (k, d) against ln bytes of the row set, non-decreasing. */
export interface FootprintPoint {
	lnBytes: number;
	ns: number;
}

export interface FittedModel {
	record: CalibrationRecord;
	/** sd of ln(reference kernel ns) over the calibration: how much the machine's speed moved under other load while it ran */
	loadSpread: number;
	/** per-update cost lines from the default (2–4 MiB) row sets */
	kernel: KernelLine[];
	footprint: FootprintPoint[];
	strategies: Partial<Record<StrategyName, StrategyFit>>;
}

/** Bounds on [rows term, ln cacheFraction, ln updatesPerRead] per quantity and strategy. */
const NONNEG: SlopeBounds = [0, Infinity];
const NONPOS: SlopeBounds = [-Infinity, 0];
const NONE: SlopeBounds = [0, 0];
function boundsFor(strategy: StrategyName, rowsMin: number): Record<'passes' | 'updates' | 'miss' | 'epochs', SlopeBounds[]> {
	// memory: one load, then RAM only; neither the cache fraction nor the reader speed enters
	if (strategy === 'memory') return { passes: [NONNEG, NONE, NONE], updates: [NONNEG, NONE, NONE], miss: [FREE, NONE, NONE], epochs: [NONNEG, NONE, NONE] };
	// block: more rows → more blocks; at a fixed budget (fraction ∝ 1/n) ln of total updates moves by 1 + b·n₀/n − c per
	// ln n for rows slope b and fraction slope c, so b ≥ 0 and c ≤ 1 keep it from falling
	// block and selective read, then solve, one block at a time: the reader speed does not enter convergence
	if (strategy === 'block') return { passes: [NONNEG, NONPOS, NONE], updates: [NONNEG, [-Infinity, 1], NONE], miss: [FREE, FREE, NONE], epochs: [NONNEG, FREE, NONE] };
	// selective and stream: more RAM (larger fraction) never needs more passes or updates
	// stream: a faster disk (fewer updates per read r) must not cost time: passes ∝ r^γ with γ ∈ [−1, 0], updates rise with r
	const stream = strategy === 'stream';
	// stream's ladders often need fewer epochs and passes as rows grow (one calibration: 164 → 102 epochs from 2 400 to
	// 19 000 rows), and the back-test prefers letting them fall (results/backtest.md). A slope of b on
	// 1 − n₀/n changes ln(n × epochs) by 1 + b·n₀/n per ln n, so b ≥ −(smallest rows ÷ n₀), at most 1, keeps total
	// work and bytes read rising with rows wherever the curves are read (predict holds them flat below that)
	const rows: SlopeBounds = stream ? [-Math.min(1, rowsMin / ROWS_REF), Infinity] : NONNEG;
	return { passes: [rows, NONPOS, stream ? [-1, 0] : NONE], updates: [rows, NONPOS, stream ? NONNEG : NONE], miss: [FREE, FREE, stream ? FREE : NONE], epochs: [rows, FREE, stream ? FREE : NONE] };
}

/**
 * Weight of a run in the convergence curves: (rows / largest rows)^power. Small runs follow
 * another regime (a few epochs, start-up effects), and the curves bend between them and the top.
 * Chosen by benchmarks/backtest.ts --hold 2 on calibration records alone (predicting the top rung
 * from runs at most a quarter of its rows): power 2 against 0 took the median wall error from
 * 28 % to 21 % and epochs from 14 % to 10 % (benchmarks/results/backtest.md).
 */
const RUNG_WEIGHT_POWER = 2;

/**
 * n₀ of the rows term. Any constant gives the same fit (the term is affine in n₀/rows) except where
 * least squares pins a column that spreads under 0.05: with 1 000, a ladder whose rungs all lie above
 * 20 000 rows gets slope 0, and there the term has under 0.05 left to move, so that costs little.
 */
const ROWS_REF = 1000;

/**
 * Rows enter the convergence curves as 1 − n₀/n. Calibration sets keep the plan's rows per feature,
 * so a larger set is the same problem drawn bigger: its epochs settle to a limit, and the small rungs
 * differ from it by a finite-size term that fades like 1/n. The law before, ln ln n, kept growing and
 * carried the steep climb of the small rungs to the plan's size. Chosen by benchmarks/backtest.ts on
 * calibration records alone, over (1 − (n₀/n)^a)/a for a = 0 (ln n), ¼, ½, 1, 2 and ln ln n: at 4×
 * (--hold 2) a = 1 took the median wall error from 21 % to 14 % and epochs from 12 % to 6 %, at 8×
 * (--hold 3) wall from 27 % to 19 % and epochs from 36 % to 12 % (benchmarks/results/backtest.md).
 */
export const rowsTerm = (rows: number) => 1 - ROWS_REF / Math.max(1, rows);

export const features = (run: Pick<CalibrationRun, 'rows' | 'cacheFraction' | 'updatesPerRead'>) => [
	rowsTerm(run.rows),
	Math.log(Math.min(1, run.cacheFraction)),
	Math.log(run.updatesPerRead)
];

function median(xs: number[]): number {
	if (xs.length === 0) return NaN;
	const s = [...xs].sort((a, b) => a - b);
	const m = s.length >> 1;
	return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** ns per update = a + b·k, one line per measured feature dimension. */
export function fitKernelLines(points: KernelPoint[]): KernelLine[] {
	const byD = new Map<number, KernelPoint[]>();
	for (const p of points) byD.set(p.features, [...(byD.get(p.features) ?? []), p]);
	const lines: KernelLine[] = [];
	for (const [d, ps] of byD) {
		const f = fitLinear(
			ps.map((p) => [p.nnzPerRow]),
			ps.map((p) => p.nsPerUpdate),
			[NONNEG]
		);
		lines.push({ lnD: Math.log(d), a: Math.max(0, f.coef[0]), b: f.coef[1] });
	}
	return lines.sort((x, y) => x.lnD - y.lnD);
}

/** kernel points over row sets below this are the default ones (2–4 MiB) */
const DEFAULT_ROW_SET_LIMIT = 8 << 20;

function fitFootprint(points: KernelPoint[], k: number, d: number): FootprintPoint[] {
	const base = points.find((p) => (p.rowBytes ?? 0) < DEFAULT_ROW_SET_LIMIT)?.rowBytes;
	const at = points
		.filter((p) => p.features === d && Math.round(p.nnzPerRow) === Math.round(k))
		.map((p) => ({ lnBytes: Math.log(p.rowBytes ?? base ?? 1), ns: p.nsPerUpdate }))
		.sort((a, b) => a.lnBytes - b.lnBytes);
	// more bytes of rows never make an update cheaper (measurement noise aside)
	for (let i = 1; i < at.length; i++) at[i].ns = Math.max(at[i].ns, at[i - 1].ns);
	return at;
}

/**
 * Extra ns per update when the rows take `bytes` instead of the default kernel row set: the
 * memory stalls of fetching rows from further out, added to (not multiplied with) the rest of
 * a solver's per-update work. Interpolated in ln bytes, flat beyond the largest measured set.
 */
export function extraNsForRows(curve: FootprintPoint[], bytes: number): number {
	if (curve.length < 2) return 0;
	const x = Math.log(Math.max(1, bytes));
	if (x <= curve[0].lnBytes) return 0;
	for (let i = 1; i < curve.length; i++) {
		if (x <= curve[i].lnBytes) {
			const t = (x - curve[i - 1].lnBytes) / (curve[i].lnBytes - curve[i - 1].lnBytes);
			return curve[i - 1].ns + t * (curve[i].ns - curve[i - 1].ns) - curve[0].ns;
		}
	}
	return curve[curve.length - 1].ns - curve[0].ns;
}

/**
 * Bytes the trainer cycles over, which set its memory stalls: the rows it holds (every row for
 * memory; a block, a block and a cache, or the stream cache for the others) and the per-example
 * arrays it reads at random beside them (α, C − α, the margin log). Once a machine has 1 GiB or
 * more, a budget short of every row puts this past the largest kernel point (128 MiB), so more RAM
 * never adds stalls; below that the emulated caches of calibration and validation runs live.
 */
export function trainerRowBytes(strategy: StrategyName, rows: number, cacheFraction: number, k: number, valueKind: 'binary' | 'real', logistic: boolean): number {
	const held = (strategy === 'memory' ? 1 : Math.min(1, cacheFraction)) * cachedRowsBytes(strategy, rows, k, valueKind);
	return held + stateBytes(rows, 0, logistic, strategy !== 'memory');
}

/** Kernel ns per update at (k, d), interpolated in ln d and held flat outside the measured range. */
export function kernelNs(kernel: KernelLine[], k: number, d: number): number {
	const lnD = Math.log(d);
	let lo = kernel[0];
	let hi = kernel[kernel.length - 1];
	for (const l of kernel) {
		if (l.lnD <= lnD) lo = l;
		if (l.lnD >= lnD && hi.lnD >= l.lnD) hi = l;
	}
	if (lnD <= kernel[0].lnD) hi = lo = kernel[0];
	if (lnD >= kernel[kernel.length - 1].lnD) hi = lo = kernel[kernel.length - 1];
	const t = hi.lnD > lo.lnD ? (lnD - lo.lnD) / (hi.lnD - lo.lnD) : 0;
	const at = (l: KernelLine) => l.a + l.b * k;
	return Math.max(1e-3, at(lo) + t * (at(hi) - at(lo)));
}

/**
 * compute seconds ≈ fixed + ratio × kernel-predicted seconds: the fixed part (JIT warm-up,
 * per-run setup) would otherwise inflate the per-update cost of the small runs.
 */
function fitCost(model: number[], measured: number[]): { ratio: number; fixed: number } {
	const top = Math.max(...model);
	const through0 = () => ({ ratio: measured.reduce((a, y, i) => a + y * model[i], 0) / Math.max(1e-30, model.reduce((a, x) => a + x * x, 0)), fixed: 0 });
	if (!(top > 0)) return { ratio: 1, fixed: 0 };
	const f = fitLinear(
		model.map((x) => [x / top]),
		measured,
		[NONNEG]
	);
	const ratio = f.coef[1] / top;
	if (f.coef[0] < 0 || !(ratio > 0)) return through0();
	return { ratio, fixed: f.coef[0] };
}

function fitStrategy(rec: CalibrationRecord, kernel: KernelLine[], footprint: FootprintPoint[], strategy: StrategyName): StrategyFit | undefined {
	const runs = rec.runs.filter((r) => r.strategy === strategy && r.updates > 0 && r.capped !== true);
	if (runs.length === 0) return undefined;
	const rowsMin = Math.min(...runs.map((r) => r.rows));
	const rowsMax = Math.max(...runs.map((r) => r.rows));
	const b = boundsFor(strategy, rowsMin);
	const xs = runs.map(features);
	// the curves are read beyond the largest run, so the runs nearest it weigh most: (rows / largest)²
	const weights = runs.map((r) => (r.rows / rowsMax) ** RUNG_WEIGHT_POWER);
	const k = rec.plan.dataset.nnzPerRow;
	// runs are taken as they ran: a short reference measurement before them tracks the machine's load worse than
	// the runs themselves do, so each run's referenceNs is kept in the record but not divided out
	// at each run's own feature dimension: smaller weight vectors than the plan's sit nearer the core
	const computeModel = runs.map((r) => r.updates * kernelNs(kernel, k, r.features ?? rec.features) * 1e-9);
	// the rows' own memory stalls at each run's size come off before the ratio is fitted
	const stalls = runs.map((r) => r.updates * extraNsForRows(footprint, trainerRowBytes(strategy, r.rows, r.cacheFraction, k, rec.plan.dataset.valueKind, rec.plan.training.loss === 'logistic')) * 1e-9);
	const { ratio: costRatio, fixed: computeFixed } = fitCost(
		computeModel,
		runs.map((r, i) => Math.max(r.computeSeconds * 0.1, r.computeSeconds - stalls[i]))
	);
	const implied = (r: CalibrationRun) => (r.passes * r.bytesOnDisk) / Math.max(1e-6, r.readSeconds);
	const free = runs.filter((r) => r.diskMBps === null);
	const decodeBps = free.length > 0 ? median(free.map(implied)) : Math.max(rec.decode.binaryMBps * 1e6, ...runs.map(implied));
	const throttled = runs.filter((r) => r.diskMBps !== null && r.diskMBps * 1e6 < decodeBps);
	// taken at the largest throttled rows: small files read in a few requests, whose fixed costs and
	// overlap with compute do not carry to a plan's size (measured read ratios settle as rows grow). Still so
	// with sub-millisecond waits served: the median over every throttled run back-tests worse (4×: wall 18 → 22 %)
	const throttledTop = Math.max(...throttled.map((r) => r.rows));
	const throttleRatio = throttled.length > 0 ? median(throttled.filter((r) => r.rows === throttledTop).map((r) => (r.readSeconds * r.diskMBps! * 1e6) / (r.passes * r.bytesOnDisk))) : 1;
	// wall − read − compute = overhead + bookkeeping × rows × passes − overlap × min(read, compute). Only stream reads
	// while it trains. The others copy rows into working sets and estimate the gap outside the timers, once per row
	// and pass (selective: about 30 % of its compute at every rung); stream keeps a fixed overhead, since its passes
	// rise as the disk gets faster and a per-pass cost there could make a faster disk look slower
	const scaleMin = Math.max(1e-9, ...runs.map((r) => Math.min(r.readSeconds, r.computeSeconds)));
	const rowPasses = runs.map((r) => r.rows * Math.max(1, r.passes));
	const scaleRowPasses = Math.max(1, ...rowPasses);
	const lap = fitLinear(
		runs.map((r, i) => [-Math.min(r.readSeconds, r.computeSeconds) / scaleMin, rowPasses[i] / scaleRowPasses]),
		runs.map((r) => r.wallSeconds - r.readSeconds - r.computeSeconds),
		strategy === 'stream' ? [[0, scaleMin], NONE] : [NONE, NONNEG]
	);
	// spread between seeds at the same setting, pooled over settings
	const groups = new Map<string, number[]>();
	for (const r of runs) {
		const key = `${r.rows}|${r.cacheFraction.toPrecision(4)}|${r.updatesPerRead.toPrecision(4)}`;
		groups.set(key, [...(groups.get(key) ?? []), Math.log(r.wallSeconds)]);
	}
	let ss = 0;
	let dof = 0;
	for (const g of groups.values()) {
		if (g.length < 2) continue;
		const m = g.reduce((a, x) => a + x, 0) / g.length;
		ss += g.reduce((a, x) => a + (x - m) ** 2, 0);
		dof += g.length - 1;
	}
	return {
		strategy,
		runs: runs.length,
		passes: fitLinear(xs, runs.map((r) => Math.log(Math.max(1, r.passes))), b.passes, weights),
		epochs: fitLinear(xs, runs.map((r) => Math.log(Math.max(1e-3, r.epochs))), b.epochs, weights),
		updatesPerRow: fitLinear(xs, runs.map((r) => Math.log(r.updates / r.rows)), b.updates, weights),
		missRate: fitLinear(xs, runs.map((r) => Math.log(Math.min(1, Math.max(1e-6, 1 - r.cacheHitRate)))), b.miss, weights),
		costRatio: Number.isFinite(costRatio) && costRatio > 0 ? costRatio : 1,
		decodeBps: Number.isFinite(decodeBps) && decodeBps > 0 ? decodeBps : rec.decode.binaryMBps * 1e6,
		// below 1 where a strategy reads less than the whole file per counted pass (selective's cache, stream's
		// partial last pass, the reader's one request ahead), above 1 with block files written and read back
		throttleRatio: Number.isFinite(throttleRatio) ? Math.min(3, Math.max(0.1, throttleRatio)) : 1,
		overlap: lap.coef[1] / scaleMin,
		overheadSeconds: Math.max(0, lap.coef[0]) + computeFixed,
		secondsPerRowPass: lap.coef[2] / scaleRowPasses,
		seedSpread: dof > 0 ? Math.sqrt(ss / dof) : 0.1,
		rowsMax,
		rowsMin,
		fractionRange: [Math.min(...runs.map((r) => r.cacheFraction)), Math.max(...runs.map((r) => r.cacheFraction))],
		updatesPerReadRange: [Math.min(...runs.map((r) => r.updatesPerRead)), Math.max(...runs.map((r) => r.updatesPerRead))]
	};
}

/**
 * The spread of the reference kernel measured before each strategy's runs (and its median over the
 * calibration): a machine shared with other work runs the same code faster or slower from one
 * minute to the next, and a plan's real run meets the machine at another minute than its calibration.
 */
function loadSpread(rec: CalibrationRecord): number {
	const refs = [rec.machine.referenceNs, ...new Set(rec.runs.map((r) => r.referenceNs))].map(Math.log);
	if (refs.length < 2) return 0;
	const m = refs.reduce((a, x) => a + x, 0) / refs.length;
	return Math.sqrt(refs.reduce((a, x) => a + (x - m) ** 2, 0) / (refs.length - 1));
}

const cache = new WeakMap<CalibrationRecord, FittedModel>();

/** Fit (once per record object; later calls return the cached fit). */
export function fitModel(rec: CalibrationRecord): FittedModel {
	const hit = cache.get(rec);
	if (hit) return hit;
	const base = rec.kernel.filter((p) => (p.rowBytes ?? 0) < DEFAULT_ROW_SET_LIMIT);
	const kernel = fitKernelLines(base);
	const footprint = fitFootprint(rec.kernel, Math.min(rec.plan.dataset.nnzPerRow, rec.features), rec.features);
	const strategies: FittedModel['strategies'] = {};
	for (const s of ['memory', 'block', 'selective', 'stream'] as const) {
		const f = fitStrategy(rec, kernel, footprint, s);
		if (f) strategies[s] = f;
	}
	const model = { record: rec, loadSpread: loadSpread(rec), kernel, footprint, strategies };
	cache.set(rec, model);
	return model;
}

export { evalLinear };
