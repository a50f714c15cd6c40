/** Estimates for a plan: the model's prediction on the calibration it rests on, plus what-if curves. */
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

export interface ConvergenceCurve {
	strategy: StrategyName;
	rows: number;
	points: { seconds: number; gap: number }[];
}

export interface EstimateResponse {
	estimate: Estimate;
	calibration: calibrations.CalibrationMeta;
	whatIf: { ramGiB: WhatIf; diskMBps: WhatIf };
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

export function estimateOn(plan: Plan, resolved: calibrations.ResolvedCalibration): EstimateResponse {
	const { record } = resolved;
	return {
		estimate: predict(plan, record),
		calibration: resolved.meta,
		whatIf: {
			ramGiB: { current: plan.machine.ramGiB, points: curve(plan, record, withCurrent(RAM_GRID, plan.machine.ramGiB), (p, v) => ({ ...p, machine: { ...p.machine, ramGiB: v } })) },
			diskMBps: { current: plan.machine.diskMBps, points: curve(plan, record, withCurrent(diskGrid(plan), plan.machine.diskMBps), (p, v) => ({ ...p, machine: { ...p.machine, diskMBps: v } })) }
		},
		convergence: convergence(record),
		caution: CAUTION
	};
}

/** The estimate for a plan in a team (team calibrations of the same shape first, else the built-in one). */
export async function forPlan(teamId: string | null, plan: Plan, calibrationId?: string | null): Promise<EstimateResponse> {
	const resolved = teamId ? await calibrations.forPlan(teamId, plan, calibrationId) : calibrations.builtInCalibration(plan);
	return estimateOn(plan, resolved);
}
