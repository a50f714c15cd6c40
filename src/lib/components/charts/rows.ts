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

/** About `count` ticks spread evenly in log space across a domain (log axes otherwise crowd their labels). */
export function logTicks([lo, hi]: number[], count = 5): number[] {
	if (!(lo > 0) || !(hi > lo)) return [lo];
	const a = Math.log10(lo);
	const step = (Math.log10(hi) - a) / (count - 1);
	return Array.from({ length: count }, (_, i) => 10 ** (a + i * step));
}

/** Durations worth labelling on a time axis, inside a domain. */
const NICE_SECONDS = [1, 10, 60, 600, 3600, 6 * 3600, 86_400, 7 * 86_400, 30 * 86_400, 365 * 86_400, 3650 * 86_400];
export function timeTicks([lo, hi]: number[]): number[] {
	const nice = NICE_SECONDS.filter((s) => s >= lo && s <= hi);
	return nice.length >= 2 ? nice : logTicks([lo, hi], 4);
}
