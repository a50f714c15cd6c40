/** Estimates for a plan: the model's prediction on the calibration it rests on, plus what-if curves when asked for. */
import { predict } from '$lib/engine/model/predict.js';
import { LINE_RATES } from '$lib/engine/model/line-rates.js';
import type { Estimate } from '$lib/engine/model/estimate.js';
import type { StrategyName } from '$lib/engine/types.js';
import type { Plan } from '$lib/schemas/plan.js';
import * as calibrations from './calibrations.js';
import type { CalibrationRecord } from '$lib/engine/calibrate/record.js';

export const CAUTION = 'Estimates rest on short calibration runs and carry the range shown: confirm with a pilot run on the real data before money is spent.';

export interface WhatIfPoint {
	x: number;
	strategy: StrategyName;
	/** p50 seconds of one run; null where the strategy is infeasible */
	p50: number | null;
}

export interface WhatIf {
	/** the plan's own value on this axis */
	current: number;
	points: WhatIfPoint[];
}

export interface WhatIfCurves {
	ramGiB: WhatIf;
	diskMBps: WhatIf;
}

export interface ConvergenceCurve {
	strategy: StrategyName;
	rows: number;
	points: { seconds: number; gap: number }[];
}

export interface EstimateResponse {
	estimate: Estimate;
	calibration: calibrations.CalibrationMeta;
	/** absent when the request asked for no curves (`whatIf: false`) */
	whatIf?: WhatIfCurves;
	/** how the calibration's largest run of each strategy converged */
	convergence: ConvergenceCurve[];
	caution: string;
}

function convergence(record: CalibrationRecord): ConvergenceCurve[] {
	const best = new Map<StrategyName, ConvergenceCurve>();
	for (const run of record.runs) {
		if (!run.trace?.length) continue;
		const seen = best.get(run.strategy);
		if (!seen || run.rows > seen.rows) best.set(run.strategy, { strategy: run.strategy, rows: run.rows, points: run.trace.filter((p) => p.gap > 0) });
	}
	return [...best.values()];
}

const RAM_GRID = [2, 4, 8, 16, 32, 64, 128, 256, 512, 1024];

function curve(plan: Plan, record: CalibrationRecord, values: number[], apply: (p: Plan, v: number) => Plan): WhatIfPoint[] {
	const out: WhatIfPoint[] = [];
	for (const x of values) {
		for (const s of predict(apply(plan, x), record).strategies) out.push({ x, strategy: s.strategy, p50: s.feasible ? s.wallSeconds.p50 : null });
	}
	return out;
}

function withCurrent(grid: number[], current: number): number[] {
	return [...new Set([...grid, current])].sort((a, b) => a - b);
}

/** Disk speeds from a slow network share up to the interface's line rate (faster is not physical). */
function diskGrid(plan: Plan): number[] {
	const max = LINE_RATES[plan.machine.diskInterface].maxMBps;
	const grid: number[] = [];
	for (let v = 50; v < max; v *= 2) grid.push(v);
	grid.push(Math.floor(max));
	return grid;
}

/** p50 wall time of every strategy over a RAM grid and a disk-speed grid, each with the plan's own value (26 or so predictions). */
export function whatIfCurves(plan: Plan, record: CalibrationRecord): WhatIfCurves {
	return {
		ramGiB: { current: plan.machine.ramGiB, points: curve(plan, record, withCurrent(RAM_GRID, plan.machine.ramGiB), (p, v) => ({ ...p, machine: { ...p.machine, ramGiB: v } })) },
		diskMBps: { current: plan.machine.diskMBps, points: curve(plan, record, withCurrent(diskGrid(plan), plan.machine.diskMBps), (p, v) => ({ ...p, machine: { ...p.machine, diskMBps: v } })) }
	};
}

export function estimateOn(plan: Plan, resolved: calibrations.ResolvedCalibration, opts: { whatIf?: boolean } = {}): EstimateResponse {
	const { record } = resolved;
	return {
		estimate: predict(plan, record),
		calibration: resolved.meta,
		...(opts.whatIf !== false && { whatIf: whatIfCurves(plan, record) }),
		convergence: convergence(record),
		caution: CAUTION
	};
}

/** How long the live estimate reuses a team's calibration lookup: a calibration the worker finishes shows up within this. */
export const CALIBRATION_TTL_MS = 5_000;
const MAX_LOOKUPS = 1_000;
const lookups = new Map<string, { at: number; resolved: Promise<calibrations.ResolvedCalibration> }>();

/**
 * calibrations.forPlan, reused for CALIBRATION_TTL_MS per team, shape and named calibration: the editor
 * asks on every keystroke. A calibration the editor names by id (one that just finished) is a new key,
 * so it is seen at once. An unchanged calibration keeps its record object, and with it the model's fit,
 * which is cached per record object.
 */
function lookup(teamId: string, plan: Plan, calibrationId: string | null | undefined): Promise<calibrations.ResolvedCalibration> {
	const key = `${teamId}|${calibrations.shapeKey(plan)}|${calibrationId ?? ''}`;
	const now = Date.now();
	const seen = lookups.get(key);
	if (seen && now - seen.at < CALIBRATION_TTL_MS) return seen.resolved;
	const resolved = calibrations.forPlan(teamId, plan, calibrationId).then(async (r) => {
		const before = seen && (await seen.resolved.catch(() => null));
		return before && before.meta.id === r.meta.id && before.meta.createdAt === r.meta.createdAt ? { ...r, record: before.record } : r;
	});
	lookups.delete(key);
	if (lookups.size >= MAX_LOOKUPS) lookups.delete(lookups.keys().next().value!);
	lookups.set(key, { at: now, resolved });
	// a failed lookup is not kept
	resolved.catch(() => lookups.get(key)?.resolved === resolved && lookups.delete(key));
	return resolved;
}

/** The estimate for a plan in a team (team calibrations of the same shape first, else the built-in one), with what-if curves. */
export async function forPlan(teamId: string | null, plan: Plan, calibrationId?: string | null): Promise<EstimateResponse> {
	const resolved = teamId ? await calibrations.forPlan(teamId, plan, calibrationId) : calibrations.builtInCalibration(plan);
	return estimateOn(plan, resolved);
}

/**
 * The editor's live estimate (POST /api/estimate): as forPlan, but the calibration lookup is reused for a
 * few seconds, and the what-if curves are left out when `whatIf` is false. Saves use forPlan.
 */
export async function live(teamId: string | null, plan: Plan, calibrationId: string | null | undefined, opts: { whatIf?: boolean } = {}): Promise<EstimateResponse> {
	const resolved = teamId ? await lookup(teamId, plan, calibrationId) : calibrations.builtInCalibration(plan);
	return estimateOn(plan, resolved, opts);
}
