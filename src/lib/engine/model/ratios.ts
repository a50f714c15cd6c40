/**
 * The emulation ratios a plan implies for each strategy: the share of the data its memory
 * budget holds (cache fraction) and the trainer-to-reader speed ratio (updates per row read).
 * Calibration runs the engine at these ratios; predict evaluates the fitted curves at them.
 */
import type { Plan } from '../../schemas/plan.js';
import type { StrategyName } from '../types.js';
import { binaryBytes, cachedRowsBytes, engineStateBytes, usableRamBytes } from './sizes.js';

/** Node runtime, read buffers and bookkeeping beside what the engine counts (measured peak RSS of small runs is ~100 MiB; rounded up) */
export const RUNTIME_BYTES = 128 * 2 ** 20;

export interface BudgetShape {
	/** bytes the engine may count (usable RAM minus the runtime) */
	budget: number;
	/** what the engine counts besides rows: w, α, margin log */
	state: number;
	/** every row in RAM as the strategy holds them (stream: its cache records) */
	rowsRam: number;
	/** (budget − state) / rowsRam, capped at 1 */
	cacheFraction: number;
}

/** `memoryBytes`, when given, is the engine's budget itself (a chosen cache size) instead of usable RAM minus the runtime. */
export function budgetShape(plan: Plan, strategy: StrategyName, rows: number, memoryBytes?: number): BudgetShape {
	const ds = plan.dataset;
	const budget = memoryBytes ?? Math.max(0, usableRamBytes(plan.machine.ramGiB) - RUNTIME_BYTES);
	const state = engineStateBytes(strategy, rows, ds.features, plan.training.loss === 'logistic', budget);
	const rowsRam = cachedRowsBytes(strategy, rows, ds.nnzPerRow, ds.valueKind);
	return { budget, state, rowsRam, cacheFraction: Math.min(1, Math.max(1, budget - state) / rowsRam) };
}

/**
 * Updates per row read: how many coordinate updates the trainer makes in the time the reader
 * delivers one row, at a read rate (bytes/s) and a per-update time (s).
 */
export function updatesPerRead(bytesPerRow: number, readBps: number, secondsPerUpdate: number): number {
	return bytesPerRow / readBps / secondsPerUpdate;
}

/** Bytes per row of the binary row file the engine reads. */
export function binaryBytesPerRow(rows: number, nnzPerRow: number, valueKind: Plan['dataset']['valueKind']): number {
	return binaryBytes(rows, nnzPerRow, valueKind) / rows;
}
