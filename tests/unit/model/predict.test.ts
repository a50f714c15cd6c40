import { describe, expect, it } from 'vitest';
import { predict, RUNTIME_BYTES } from '../../../src/lib/engine/model/predict.js';
import { fitModel } from '../../../src/lib/engine/model/fit.js';
import { GiB } from '../../../src/lib/engine/model/sizes.js';
import type { Plan } from '../../../src/lib/schemas/plan.js';
import type { StrategyName } from '../../../src/lib/engine/types.js';
import { aPlan } from './plan-factory.js';
import { aRecord } from './record-factory.js';

const record = aRecord();
const twisted = aRecord({ twisted: true });
const deep = aRecord({ footprint: true });
// stream runs whose passes, epochs and updates fall like 1/n² with rows: steeper than the fit may follow
const falling = (() => {
	const rec = aRecord();
	const by = (rows: number) => (2000 / rows) ** 2;
	return {
		...rec,
		runs: rec.runs.map((r) =>
			r.strategy === 'stream'
				? { ...r, passes: r.passes * by(r.rows), epochs: r.epochs * by(r.rows), updates: r.updates * by(r.rows), readSeconds: r.readSeconds * by(r.rows), computeSeconds: r.computeSeconds * by(r.rows), wallSeconds: r.wallSeconds * by(r.rows) }
				: r
		)
	};
})();
const wall = (plan: Plan, s: StrategyName, rec = record) => predict(plan, rec).strategies.find((e) => e.strategy === s)!.wallSeconds;

describe('memory feasibility', () => {
	it('turns infeasible exactly where required bytes exceed usable RAM', () => {
		// by hand: solver rows 21 B/row + 8 B per real nonzero (+8), w 8d, α 8n, two 8 MiB read buffers, the feature
		// renumbering map 4d (w of 8 MB is past the 4 MiB threshold), runtime; usable = RAM − max(0.5 GiB, 10 %)
		const ramGiB = 16;
		const usable = ramGiB * GiB - 0.1 * ramGiB * GiB;
		const d = 1_000_000;
		const k = 40;
		const perRow = 21 + 8 * k + 8;
		const buffers = 2 * 8 * 2 ** 20 + 4 * d;
		const limit = Math.floor((usable - 8 - 8 * d - buffers - RUNTIME_BYTES) / perRow);
		const at = (rows: number) => predict(aPlan({ dataset: { rows, features: d, nnzPerRow: k }, machine: { ramGiB } }), record).strategies[0];
		expect(at(limit).feasible).toBe(true);
		expect(at(limit).reason).toBeNull();
		const over = at(limit + 1);
		expect(over.feasible).toBe(false);
		expect(over.reason).toMatch(/^needs 14\.4 GiB .*machine has 14\.4 GiB usable of 16 GiB$/);
		expect(at(limit).peakMemoryBytes).toBe(limit * perRow + 8 + 8 * d + buffers);
	});

	it('explains an out-of-core strategy that cannot hold even w and α', () => {
		const e = predict(aPlan({ dataset: { rows: 1e9, features: 1e6 }, machine: { ramGiB: 4 } }), record);
		const stream = e.strategies.find((s) => s.strategy === 'stream')!;
		expect(stream.feasible).toBe(false);
		expect(stream.reason).toMatch(/^needs \d+\.\d GiB \(weights, dual variables and margin log/);
		expect(e.recommended).toBeNull();
		expect(e.why).toMatch(/^No strategy fits/);
	});
});

describe('monotonicity over a grid', () => {
	const rams = [2, 4, 8, 16, 32, 64, 128, 512];
	const disks = [20, 50, 100, 200, 500, 1000, 3000, 7800];
	const rowsGrid = [1e4, 1e5, 1e6, 1e7, 1e8, 1e9];
	const base = { dataset: { rows: 1e8, features: 1e6, nnzPerRow: 40 }, machine: { diskInterface: 'pcie4x4' as const, diskMBps: 500, ramGiB: 32 } };
	const nonDecreasing = (xs: number[]) => xs.every((x, i) => i === 0 || x >= xs[i - 1] * (1 - 1e-12));
	const nonIncreasing = (xs: number[]) => xs.every((x, i) => i === 0 || x <= xs[i - 1] * (1 + 1e-12));

	for (const [name, rec] of [['fitted laws', record], ['wrong-sign noise', twisted], ['rows beyond the caches', deep], ['stream falling with rows', falling]] as const) {
		it(`more RAM never makes memory, selective or stream slower (${name})`, () => {
			for (const s of ['memory', 'selective', 'stream'] as const)
				for (const rows of [1e6, 1e8, 1e9]) {
					const p50 = rams.map((ramGiB) => wall(aPlan({ ...base, dataset: { ...base.dataset, rows }, machine: { ...base.machine, ramGiB } }), s, rec).p50);
					expect(nonIncreasing(p50), `${s} at ${rows} rows: ${p50.map((x) => x.toFixed(0))}`).toBe(true);
				}
		});

		it(`a faster disk never makes any strategy slower (${name})`, () => {
			for (const s of ['memory', 'block', 'selective', 'stream'] as const)
				for (const ramGiB of [8, 64]) {
					const p50 = disks.map((diskMBps) => wall(aPlan({ ...base, machine: { ...base.machine, ramGiB, diskMBps } }), s, rec).p50);
					expect(nonIncreasing(p50), `${s} at ${ramGiB} GiB: ${p50.map((x) => x.toFixed(0))}`).toBe(true);
				}
		});

		it(`more rows never make any strategy faster (${name})`, () => {
			for (const s of ['memory', 'block', 'selective', 'stream'] as const)
				for (const ramGiB of [8, 64]) {
					const ws = rowsGrid.map((rows) => wall(aPlan({ ...base, dataset: { ...base.dataset, rows }, machine: { ...base.machine, ramGiB } }), s, rec));
					expect(nonDecreasing(ws.map((w) => w.p50)), `${s} p50 at ${ramGiB} GiB: ${ws.map((w) => w.p50.toFixed(0))}`).toBe(true);
					expect(nonDecreasing(ws.map((w) => w.p90)), `${s} p90`).toBe(true);
				}
		});
	}
});

describe('stream ladders that fall with rows', () => {
	it('let stream fall only as far as keeps total work rising, and only stream', () => {
		const fit = fitModel(falling).strategies.stream!;
		// smallest rungs at 2 000 rows: the slope on 1 − 1000/n may reach −min(1, 2000/1000) = −1
		for (const curve of [fit.passes, fit.epochs, fit.updatesPerRow]) expect(curve.coef[1]).toBeCloseTo(-1, 9);
		const selective = fitModel({ ...falling, runs: falling.runs.map((r) => (r.strategy === 'selective' ? { ...r, epochs: r.epochs * (2000 / r.rows) ** 2 } : r)) }).strategies.selective!;
		expect(selective.epochs.coef[1]).toBe(0);
		// near and below the smallest rung, where the term moves most, wall time still never falls as rows grow
		const plan = aPlan({ dataset: { features: 1e6, nnzPerRow: 40 }, machine: { ramGiB: 64 } });
		const p50 = [500, 1000, 2000, 2500, 3000, 4000, 6000, 1e4, 1e5].map((rows) => wall({ ...plan, dataset: { ...plan.dataset, rows } }, 'stream', falling).p50);
		expect(p50.every((x, i) => i === 0 || x >= p50[i - 1] * (1 - 1e-12)), p50.map((x) => x.toPrecision(3)).join(', ')).toBe(true);
	});
});

describe('worked example', () => {
	it('reads 3.5 TB once at 120 MB/s in about 8.1 hours', () => {
		// 3.5e12 B / 1.2e8 B/s = 29 167 s ≈ 8.1 h (common practice, no source)
		const plan = aPlan({ dataset: { rows: 1e10, features: 1e6, nnzPerRow: 40, bytesOnDisk: 3.5e12 }, machine: { ramGiB: 64, diskMBps: 120, diskInterface: 'hdd', coreSpeed: 4 } });
		const exact = aRecord({ throttleOverhead: 1 });
		const memory = predict(plan, exact).strategies[0];
		expect(memory.passes.p50).toBe(1);
		expect(memory.breakdown.prepare / 3600).toBeCloseTo(8.1, 1);
		// the measured throttle overhead of a calibration carries over: 5 % more
		expect(predict(plan, record).strategies[0].breakdown.prepare / 3600).toBeCloseTo(8.1 * 1.05, 1);
	});
});

describe('what an estimate contains', () => {
	const plan = aPlan({ dataset: { rows: 5e7 }, machine: { ramGiB: 8, pricePerHour: 0.6 }, training: { cValues: 3, folds: 5 }, deadlineHours: 10 });
	const e = predict(plan, record);

	it('lists every strategy with ranges in order', () => {
		expect(e.strategies.map((s) => s.strategy)).toEqual(['memory', 'block', 'selective', 'stream']);
		for (const s of e.strategies) {
			expect(s.wallSeconds.p10).toBeLessThan(s.wallSeconds.p50);
			expect(s.wallSeconds.p50).toBeLessThan(s.wallSeconds.p90);
			expect(s.passes.p90).toBeGreaterThanOrEqual(s.passes.p50);
			expect(s.cacheHitRate).toBeGreaterThanOrEqual(0);
			expect(s.cacheHitRate).toBeLessThanOrEqual(1);
			const b = s.breakdown;
			expect(b.prepare + b.read + b.compute - b.overlap).toBeLessThanOrEqual(s.wallSeconds.p50);
		}
	});

	it('prices a run and the sweep, runs the folds on (folds − 1)/folds of the rows, and checks the deadline', () => {
		const s = e.strategies[3];
		expect(s.cost!.p50).toBeCloseTo((s.wallSeconds.p50 * 0.6) / 3600, 9);
		expect(s.sweep.runs).toBe(15);
		expect(s.sweep.rowsPerRun).toBe(4e7);
		expect(s.sweep.wallSeconds.p50).toBeCloseTo(15 * s.wallSeconds.p50, 6);
		const h = s.sweep.wallSeconds;
		const verdict = h.p90 <= 36000 ? 'meets' : h.p50 <= 36000 ? 'at risk' : 'misses';
		expect(s.deadline).toEqual({ hours: 10, verdict });
		expect(predict(aPlan(), record).strategies[0].cost).toBeNull();
		expect(predict(aPlan(), record).strategies[0].deadline).toBeNull();
	});

	it('recommends the fastest feasible strategy and says why in one sentence', () => {
		const feasible = e.strategies.filter((s) => s.feasible).sort((a, b) => a.sweep.wallSeconds.p50 - b.sweep.wallSeconds.p50);
		expect(e.recommended).toBe(feasible[0].strategy);
		expect(e.why).toMatch(new RegExp(`^${feasible[0].strategy} is the fastest feasible strategy at .*\\.$`));
		expect(e.why.split('. ').length).toBe(1);
	});

	it('states its extrapolation and widens the range with it', () => {
		expect(e.extrapolation.calibratedRows).toBe(8000);
		expect(e.extrapolation.factor).toBeCloseTo(4e7 / 8000, 6);
		const spread = (rows: number) => {
			const w = wall(aPlan({ dataset: { rows } }), 'memory');
			return w.p90 / w.p50;
		};
		expect(spread(1e8)).toBeGreaterThan(spread(1e6));
		expect(spread(1e6)).toBeGreaterThan(spread(8000));
	});

	it('scales compute by relative core speed', () => {
		const slow = wall(aPlan({ machine: { coreSpeed: 1 } }), 'memory').p50;
		const fast = wall(aPlan({ machine: { coreSpeed: 2 } }), 'memory').p50;
		expect(fast).toBeLessThan(slow);
		expect(fast).toBeGreaterThan(slow / 2 - 1);
	});

	it('adds the memory stalls of rows beyond the CPU caches to the per-update cost', () => {
		// 1e6 rows × 349 B ≈ 333 MiB of rows, beyond the 128 MiB point: (2 × 1800 + 2000) / (2 × 1800) ns per update
		const p = aPlan({ dataset: { rows: 1e6, features: 1e6, nnzPerRow: 40 } });
		const flat = predict(p, record).strategies[0].breakdown.compute;
		const far = predict(p, deep).strategies[0].breakdown.compute;
		expect(far / flat).toBeCloseTo(5600 / 3600, 2);
	});

	it('predicts fast enough for every keystroke', () => {
		fitModel(record);
		const p = aPlan();
		// a budget, not a benchmark: 200 predictions well under a second even on a busy machine
		const t = performance.now();
		for (let i = 0; i < 200; i++) predict({ ...p, dataset: { ...p.dataset, rows: 1e6 + i } }, record);
		expect(performance.now() - t).toBeLessThan(1000);
	});
});

describe('the epoch limit', () => {
	it('caps a strategy whose epochs would pass the engine limit, says so, and recommends one that converges', () => {
		// block runs whose epochs double with rows: extrapolated to 10 million rows they pass the 1000-epoch limit
		const rec = aRecord();
		rec.runs = rec.runs.map((r) => (r.strategy === 'block' ? { ...r, epochs: r.rows / 5, updates: (r.rows * r.rows) / 5 } : r));
		const e = predict(aPlan({ dataset: { rows: 10_000_000 }, machine: { ramGiB: 16 } }), rec);
		const block = e.strategies.find((s) => s.strategy === 'block')!;
		// the engine's default maxEpochs (solver/options.ts) is where a run stops
		expect(block.reachesTolerance).toBe(false);
		expect(block.epochs).toBeCloseTo(1000, 6);
		expect(e.notes.some((n) => n.startsWith('block: predicted to stop at the epoch limit (1000 epochs)'))).toBe(true);
		const others = e.strategies.filter((s) => s.strategy !== 'block');
		expect(others.every((s) => s.reachesTolerance)).toBe(true);
		expect(e.recommended).not.toBe('block');
	});
});
