/** What the model predicts for one plan: an estimate per strategy plus a recommendation. */
import type { StrategyName } from '../types.js';

export interface Range3 {
	p10: number;
	p50: number;
	p90: number;
}

export interface StrategyEstimate {
	strategy: StrategyName;
	feasible: boolean;
	/** why not, when infeasible: required versus available bytes */
	reason: string | null;
	/** sequential passes over the data on disk (a conversion, the initial load or the block preparation counts) */
	passes: { p50: number; p90: number };
	/** trainer passes over the examples in RAM */
	epochs: number;
	/** false when the run is predicted to stop at the engine's epoch limit before the gap reaches tol */
	reachesTolerance: boolean;
	/** share of coordinate updates served from memory */
	cacheHitRate: number;
	/** one training run */
	wallSeconds: Range3;
	/** p50 seconds; wall = prepare + read + compute − overlap (+ fixed start-up) */
	breakdown: { prepare: number; read: number; compute: number; overlap: number };
	peakMemoryBytes: number;
	/** one run at the machine's hourly price; null without a price */
	cost: Range3 | null;
	/** every run of the sweep (C values × folds) */
	sweep: { runs: number; rowsPerRun: number; wallSeconds: Range3; cost: Range3 | null };
	/** sweep against deadlineHours: meets (p90 inside), at risk (p50 inside), misses; null without a deadline */
	deadline: { hours: number; verdict: 'meets' | 'at risk' | 'misses' } | null;
	/** the emulation ratios this estimate evaluated the model at */
	cacheFraction: number;
	updatesPerRead: number;
}

export interface Extrapolation {
	/** rows of one run of the plan */
	rows: number;
	/** largest rows a calibration run used */
	calibratedRows: number;
	/** rows / calibratedRows */
	factor: number;
	/** ln-space spread added for the extrapolation (0.15 per decade; chosen, not measured) */
	widening: number;
	text: string;
}

export interface Estimate {
	strategies: StrategyEstimate[];
	/** fastest feasible strategy that reaches the tolerance (else the fastest feasible), null when none is feasible */
	recommended: StrategyName | null;
	/** one sentence saying why */
	why: string;
	extrapolation: Extrapolation;
	/** what the estimate rests on and where the plan differs from the calibration */
	notes: string[];
}
