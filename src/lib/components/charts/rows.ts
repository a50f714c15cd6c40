/** Turn per-strategy estimates into range-bar rows: prepare, read not hidden by compute, compute. */
import type { StrategyEstimate } from '$lib/engine/model/estimate.js';

export interface RangeRow {
	key: string;
	segments: { from: number; to: number; color: string; label: string }[];
	p10: number;
	p50: number;
	p90: number;
}

export const SEGMENT_COLORS = { prepare: '#9bb1c8', read: '#f2a541', compute: '#2a9d8f' };

export function toRangeRows(strategies: StrategyEstimate[]): RangeRow[] {
	return strategies
		.filter((s) => s.feasible)
		.map((s) => {
			const b = s.breakdown;
			const read = Math.max(0, b.read - b.overlap);
			return {
				key: s.strategy,
				p10: s.wallSeconds.p10,
				p50: s.wallSeconds.p50,
				p90: s.wallSeconds.p90,
				segments: [
					{ from: 0, to: b.prepare, color: SEGMENT_COLORS.prepare, label: 'prepare' },
					{ from: b.prepare, to: b.prepare + read, color: SEGMENT_COLORS.read, label: 'read' },
					{ from: b.prepare + read, to: b.prepare + read + b.compute, color: SEGMENT_COLORS.compute, label: 'compute' }
				]
			};
		});
}
