/**
 * Predict every strategy's estimate for a plan from a fitted calibration. Pure and fast
 * (no I/O, no matrix algebra): the web app calls it on every keystroke and for what-if curves.
 *
 * Target-machine scaling: CPU work (updates, decoding) is scaled by coreSpeed of the
 * calibration machine over the plan's; reading runs at the slower of the disk and the scaled decode speed.
 */
import type { Plan } from '../../schemas/plan.js';
import type { StrategyName } from '../types.js';
import type { CalibrationRecord } from '../calibrate/record.js';
import { extraNsForRows, fitModel, kernelNs, evalLinear, rowsTerm, trainerRowBytes, type FittedModel, type StrategyFit } from './fit.js';
import { binaryBytes, bytesOnDisk, formatBytes, textBytes, usableRamBytes, weightBytes } from './sizes.js';
import type { Estimate, Range3, StrategyEstimate } from './estimate.js';
import { budgetShape, RUNTIME_BYTES, updatesPerRead as ratioUpdatesPerRead } from './ratios.js';
import { DEFAULT_MAX_EPOCHS } from '../solver/options.js';
import { leverage, type LinearFit } from './least-squares.js';

export { RUNTIME_BYTES };

/** smallest cache / block budget the out-of-core strategies can work with */
export const MIN_BUDGET_BYTES = 16 * 2 ** 20;
/** z for the 10th and 90th percentiles of a normal */
const Z90 = 1.2816;
/** extra ln-spread per decade of extrapolation in rows (chosen, not measured) */
const WIDEN_PER_DECADE = 0.15;

const ORDER: StrategyName[] = ['memory', 'block', 'selective', 'stream'];

function range(p50: number, sigma: number): Range3 {
	return { p10: p50 * Math.exp(-Z90 * sigma), p50, p90: p50 * Math.exp(Z90 * sigma) };
}

const scale = (r: Range3, f: number): Range3 => ({ p10: r.p10 * f, p50: r.p50 * f, p90: r.p90 * f });

/** "2.4 h" style. */
export function formatSeconds(s: number): string {
	if (s < 120) return `${s.toPrecision(3)} s`;
	if (s < 7200) return `${(s / 60).toPrecision(3)} min`;
	if (s < 172800) return `${(s / 3600).toPrecision(3)} h`;
	return `${(s / 86400).toPrecision(3)} days`;
}

interface Context {
	plan: Plan;
	model: FittedModel;
	rows: number;
	runs: number;
	/** CPU seconds here → CPU seconds on the target */
	cpuScale: number;
	diskBps: number;
	binBytes: number;
	usable: number;
	memoryBytes: number | undefined;
	tUpdate: number;
	/** seconds per ns of kernel time on the target (its core speed) */
	nsScale: number;
	widening: number;
	conversion: { seconds: number; passes: number };
}

/** Converting a text or compressed source into binary rows: read + parse (+ gunzip), then write binary. */
function conversion(plan: Plan, rec: CalibrationRecord, rows: number, cpuScale: number, binBytes: number): { seconds: number; passes: number } {
	const ds = plan.dataset;
	if (ds.format === 'binary' && !ds.compressed) return { seconds: 0, passes: 0 };
	const diskBps = plan.machine.diskMBps * 1e6;
	const src = (bytesOnDisk(ds) * rows) / ds.rows;
	const raw = ds.format === 'text' ? textBytes(rows, ds.features, ds.nnzPerRow, ds.valueKind, ds.positiveFraction) : binBytes;
	const cpu = (ds.format === 'text' ? raw / (rec.decode.textMBps * 1e6) : raw / (rec.decode.binaryMBps * 1e6)) + (ds.compressed ? raw / (rec.decode.gunzipMBps * 1e6) : 0);
	return { seconds: Math.max(src / diskBps, cpu * cpuScale) + binBytes / diskBps, passes: 1 };
}

function estimateOne(ctx: Context, s: StrategyName, fit: StrategyFit | undefined): StrategyEstimate {
	const { plan, rows } = ctx;
	const m = plan.machine;
	let feasible = true;
	let reason: string | null = null;
	const shape = budgetShape(plan, s, rows, ctx.memoryBytes);
	const { state, rowsRam, cacheFraction } = shape;
	let peak: number;
	if (s === 'memory') {
		const required = rowsRam + state + RUNTIME_BYTES;
		peak = required - RUNTIME_BYTES;
		if (ctx.memoryBytes !== undefined ? peak > ctx.memoryBytes : required > ctx.usable) {
			feasible = false;
			reason = `needs ${formatBytes(required)} (data ${formatBytes(rowsRam)}, weights and dual variables ${formatBytes(state)}, runtime ${formatBytes(RUNTIME_BYTES)}), machine has ${formatBytes(ctx.usable)} usable of ${m.ramGiB} GiB`;
		}
	} else {
		peak = state + Math.min(1, cacheFraction) * rowsRam;
		if (shape.budget - state < MIN_BUDGET_BYTES) {
			feasible = false;
			reason = `needs ${formatBytes(state + MIN_BUDGET_BYTES + RUNTIME_BYTES)} (weights, dual variables and margin log ${formatBytes(state)}, runtime ${formatBytes(RUNTIME_BYTES)}, smallest cache ${formatBytes(MIN_BUDGET_BYTES)}), machine has ${formatBytes(ctx.usable)} usable of ${m.ramGiB} GiB`;
		}
	}
	const f = fit ?? ctx.model.strategies.memory!;
	// seconds per byte read: the disk (with the throttle's measured overhead) or decoding, whichever is slower
	const perByte = Math.max(f.throttleRatio / ctx.diskBps, ctx.cpuScale / f.decodeBps);
	const updatesPerRead = ratioUpdatesPerRead(ctx.binBytes / rows, 1 / perByte, ctx.tUpdate);
	// below the smallest calibrated rows the curves are held flat: 1 − n₀/n falls steeply there, and nothing was measured
	const x = [rowsTerm(Math.max(rows, f.rowsMin)), Math.log(cacheFraction), Math.log(updatesPerRead)];
	const passesFree = s === 'memory' ? 1 : Math.max(1, Math.exp(evalLinear(f.passes, x)));
	const epochsFree = Math.exp(evalLinear(f.epochs, x));
	// the engine stops at its epoch limit: the work beyond it is not done (and the gap stays above tol)
	const reachesTolerance = epochsFree <= DEFAULT_MAX_EPOCHS;
	const cut = reachesTolerance ? 1 : DEFAULT_MAX_EPOCHS / epochsFree;
	const epochs = epochsFree * cut;
	const passesEngine = s === 'memory' ? 1 : Math.max(1, 1 + (passesFree - 1) * cut);
	const updates = rows * Math.exp(evalLinear(f.updatesPerRow, x)) * cut;
	const hit = s === 'memory' ? 1 - Math.min(1, rows / Math.max(updates, rows)) : 1 - Math.min(1, Math.exp(evalLinear(f.missRate, x)));
	const read = passesEngine * ctx.binBytes * perByte;
	// memory stalls of the rows the trainer cycles over (all of them, or what the budget holds)
	const tStall = extraNsForRows(ctx.model.footprint, trainerRowBytes(s, rows, cacheFraction, plan.dataset.nnzPerRow, plan.dataset.valueKind, plan.training.loss === 'logistic')) * ctx.nsScale;
	const compute = updates * (ctx.tUpdate * f.costRatio + tStall);
	const overlapShare = m.cores >= 2 ? f.overlap : 0;
	const overlap = overlapShare * Math.min(read, compute);
	const prepare = ctx.conversion.seconds + read / passesEngine;
	// bookkeeping outside the timers, per row and pass, is CPU work: it scales with the target's cores
	const bookkeeping = f.secondsPerRowPass * rows * passesEngine * ctx.cpuScale;
	const wall50 = f.overheadSeconds + bookkeeping + ctx.conversion.seconds + read + compute - overlap;
	// the residual spread, plus the fitted curve's own standard error at x (regression prediction interval)
	const sdAt = (g: LinearFit) => g.sd * Math.sqrt(1 + leverage(g, x));
	const sigmaWall = Math.hypot(f.seedSpread, Math.max(sdAt(f.passes), sdAt(f.updatesPerRow)), ctx.widening, ctx.model.loadSpread);
	const sigmaPasses = s === 'memory' ? 0 : Math.hypot(sdAt(f.passes), ctx.widening);
	const passes = passesEngine + ctx.conversion.passes;
	const wallSeconds = range(wall50, sigmaWall);
	const price = m.pricePerHour;
	const cost = price === undefined ? null : scale(wallSeconds, price / 3600);
	// the source is converted once per sweep, then every run reads the binary rows
	const conv = ctx.conversion.seconds;
	const sweepWall: Range3 = { p10: conv + Math.max(0, wallSeconds.p10 - conv) * ctx.runs, p50: conv + (wall50 - conv) * ctx.runs, p90: conv + (wallSeconds.p90 - conv) * ctx.runs };
	const deadlineHours = plan.deadlineHours;
	const deadline =
		deadlineHours === undefined
			? null
			: { hours: deadlineHours, verdict: sweepWall.p90 <= deadlineHours * 3600 ? ('meets' as const) : sweepWall.p50 <= deadlineHours * 3600 ? ('at risk' as const) : ('misses' as const) };
	return {
		strategy: s,
		feasible,
		reason,
		passes: { p50: passes, p90: ctx.conversion.passes + passesEngine * Math.exp(Z90 * sigmaPasses) },
		epochs,
		reachesTolerance,
		cacheHitRate: Math.max(0, hit),
		wallSeconds,
		breakdown: { prepare, read: read - read / passesEngine, compute, overlap },
		peakMemoryBytes: peak,
		cost,
		sweep: { runs: ctx.runs, rowsPerRun: rows, wallSeconds: sweepWall, cost: price === undefined ? null : scale(sweepWall, price / 3600) },
		deadline,
		cacheFraction,
		updatesPerRead
	};
}

function differences(plan: Plan, rec: CalibrationRecord): string[] {
	const a = plan.dataset;
	const b = rec.plan.dataset;
	const out: string[] = [];
	const rel = (x: number, y: number) => Math.abs(x - y) / Math.max(x, y);
	if (rel(a.nnzPerRow, b.nnzPerRow) > 0.25) out.push(`calibrated at ${b.nnzPerRow} nonzeros per row, plan has ${a.nnzPerRow}: per-update cost is rescaled, convergence is not; recalibrate`);
	if (rel(a.features, b.features) > 0.5) out.push(`calibrated at ${b.features} features, plan has ${a.features}: recalibrate for the weight-vector footprint`);
	if (a.valueKind !== b.valueKind) out.push(`calibrated on ${b.valueKind} values, plan has ${a.valueKind}: recalibrate`);
	if (a.positiveFraction !== b.positiveFraction) out.push(`calibrated at positive fraction ${b.positiveFraction}, plan has ${a.positiveFraction}`);
	const t = plan.training;
	const u = rec.plan.training;
	if (t.loss !== u.loss || t.C !== u.C || t.tol !== u.tol) out.push(`calibrated for ${u.loss}, C=${u.C}, tol=${u.tol}; plan asks ${t.loss}, C=${t.C}, tol=${t.tol}: recalibrate`);
	return out;
}

/** Where a strategy is evaluated outside the ratios its calibration ran at (more than 25 % off). */
function outside(e: StrategyEstimate, f: StrategyFit): string[] {
	const out: string[] = [];
	const off = (x: number, [lo, hi]: [number, number]) => x < lo * 0.75 || x > hi * 1.25;
	if (e.strategy !== 'memory' && off(e.cacheFraction, f.fractionRange))
		out.push(`${e.strategy}: cache fraction ${e.cacheFraction.toPrecision(2)} is outside the calibrated ${f.fractionRange.map((x) => x.toPrecision(2)).join('–')}: extrapolated`);
	if (e.strategy === 'stream' && off(e.updatesPerRead, f.updatesPerReadRange))
		out.push(`stream: ${e.updatesPerRead.toPrecision(2)} updates per row read is outside the calibrated ${f.updatesPerReadRange.map((x) => x.toPrecision(2)).join('–')}: extrapolated`);
	return out;
}

/** Estimates for every strategy of a plan, from a calibration record (fitted once, cached). */
export interface PredictOptions {
	/** the engine's memory budget in bytes (a chosen cache size), instead of the machine's usable RAM minus the runtime */
	memoryBytes?: number;
}

export function predict(plan: Plan, calibration: CalibrationRecord | FittedModel, opts: PredictOptions = {}): Estimate {
	const model = 'kernel' in calibration && 'strategies' in calibration ? (calibration as FittedModel) : fitModel(calibration as CalibrationRecord);
	const rec = model.record;
	const ds = plan.dataset;
	const folds = plan.training.folds;
	const rows = folds > 1 ? Math.max(1, Math.round((ds.rows * (folds - 1)) / folds)) : ds.rows;
	const cpuScale = rec.machine.coreSpeed / plan.machine.coreSpeed;
	// binary rows as stated in the plan, else as the binary row format lays them out
	const binBytes = ds.format === 'binary' && !ds.compressed && ds.bytesOnDisk !== undefined ? (ds.bytesOnDisk * rows) / ds.rows : binaryBytes(rows, ds.nnzPerRow, ds.valueKind);
	const calibratedRows = Math.max(...Object.values(model.strategies).map((f) => f.rowsMax));
	const factor = rows / calibratedRows;
	const widening = WIDEN_PER_DECADE * Math.log10(Math.max(1, factor));
	const ctx: Context = {
		plan,
		model,
		rows,
		runs: plan.training.cValues * folds,
		cpuScale,
		diskBps: plan.machine.diskMBps * 1e6,
		binBytes,
		usable: opts.memoryBytes !== undefined ? opts.memoryBytes + RUNTIME_BYTES : usableRamBytes(plan.machine.ramGiB),
		memoryBytes: opts.memoryBytes,
		// per update on the target: the kernel at (k, d) at the target's core speed
		tUpdate: kernelNs(model.kernel, ds.nnzPerRow, Math.min(ds.features, rec.features)) * 1e-9 * cpuScale,
		nsScale: 1e-9 * cpuScale,
		widening,
		conversion: conversion(plan, rec, rows, cpuScale, binBytes)
	};
	const strategies = ORDER.filter((s) => model.strategies[s]).map((s) => estimateOne(ctx, s, model.strategies[s]));
	// a strategy that stops at the epoch limit returns a less accurate model: it comes last
	const feasible = strategies.filter((e) => e.feasible).sort((a, b) => Number(b.reachesTolerance) - Number(a.reachesTolerance) || a.sweep.wallSeconds.p50 - b.sweep.wallSeconds.p50);
	const best = feasible[0];
	let why: string;
	if (!best) why = `No strategy fits: ${strategies.find((e) => e.reason)?.reason ?? 'no calibrated strategy'}.`;
	else {
		const next = feasible[1];
		const memory = strategies.find((e) => e.strategy === 'memory');
		const vs = next ? ` against ${formatSeconds(next.sweep.wallSeconds.p50)} for ${next.strategy}` : '';
		const mem = best.strategy !== 'memory' && memory && !memory.feasible ? `; memory does not fit (${memory.reason})` : '';
		const short = best.reachesTolerance ? '' : ` No strategy reaches tol=${plan.training.tol} within ${DEFAULT_MAX_EPOCHS} epochs: raise tol, lower C, or give it more RAM.`;
		why = `${best.strategy} is the fastest feasible strategy${best.reachesTolerance && feasible.some((e) => !e.reachesTolerance) ? ' that reaches the tolerance' : ''} at ${formatSeconds(best.sweep.wallSeconds.p50)} (p50, ${best.passes.p50.toFixed(1)} passes)${vs}${mem}.${short}`;
	}
	const notes = [
		`measured on ${rec.machine.cpuModel} (${rec.machine.date.slice(0, 10)}): per-update cost, decode speed, passes, epochs and hit rates at up to ${calibratedRows} rows`,
		`scaled to the plan's machine: CPU work × ${cpuScale.toPrecision(3)} (core speed ${rec.machine.coreSpeed.toPrecision(3)} → ${plan.machine.coreSpeed}), reads at ${plan.machine.diskMBps} MB/s`,
		...(ds.features > rec.features ? [`weights of ${formatBytes(weightBytes(ds.features))} exceed the ${formatBytes(weightBytes(rec.features))} calibration could hold: per-update cost is extrapolated`] : []),
		...(plan.training.cValues > 1 ? ['a sweep assumes every C value costs what training.C costs'] : []),
		...differences(plan, rec),
		...strategies.flatMap((e) => outside(e, model.strategies[e.strategy]!)),
		...strategies.filter((e) => !e.reachesTolerance).map((e) => `${e.strategy}: predicted to stop at the epoch limit (${DEFAULT_MAX_EPOCHS} epochs) before the duality gap reaches tol=${plan.training.tol}; time shown is up to that limit`)
	];
	return {
		strategies,
		recommended: best?.strategy ?? null,
		why,
		extrapolation: {
			rows,
			calibratedRows,
			factor,
			widening,
			text: factor > 1 ? `extrapolates ${factor.toPrecision(3)}× beyond the largest calibration run (${calibratedRows} rows); range widened by ${(widening * 100).toFixed(0)} % in log space` : `within the calibrated rows (${rows} of ${calibratedRows})`
		},
		notes
	};
}

