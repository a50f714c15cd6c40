import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Loss, StrategyName, TrainReport } from '../../../../src/lib/engine/types.js';
import { generateToFile } from '../../../../src/lib/engine/data/generate.js';
import { train } from '../../../../src/lib/engine/solver/train.js';
import type { StreamReport } from '../../../../src/lib/engine/solver/strategy-stream.js';
import { streamCacheBytes } from '../../../../src/lib/engine/solver/stream-cache.js';
import { budgetForRows } from '../../../../src/lib/engine/model/sizes.js';

let dir = '';
let data = '';
const TOL = 0.01;
// small enough for a fast test, large enough that a 1.5 MB budget splits it into several blocks
const SHAPE = { rows: 6000, features: 2000, nnz: 20, positive: 0.4, noise: 0.05, skew: 1, values: 'real' as const, seed: 11 };
const BUDGET = 1_500_000;

beforeAll(async () => {
	dir = mkdtempSync(join(tmpdir(), 'loadline-strategies-'));
	data = join(dir, 'train.bin');
	await generateToFile(SHAPE, data, 'bin');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const run = (strategy: StrategyName, loss: Loss, extra: Record<string, unknown> = {}) =>
	train({ data, loss, C: 1, strategy, tol: TOL, maxEpochs: 400, seed: 2, memoryBytes: strategy === 'memory' ? undefined : BUDGET, ...extra });

describe('the four strategies', () => {
	for (const loss of ['hinge', 'sqhinge', 'logistic'] as Loss[]) {
		it(`${loss}: every strategy stops at a gap ≤ tol and all primals agree within tol`, async () => {
			const reports: TrainReport[] = [];
			for (const s of ['memory', 'block', 'selective', 'stream'] as StrategyName[]) reports.push(await run(s, loss));
			const best = Math.min(...reports.map((r) => r.dual));
			for (const r of reports) {
				// weak duality (Hsieh et al. 2008, Section 2): P(w) − D(α) ≥ 0, so P − P* ≤ P − D ≤ tol·P
				expect(r.gap, r.strategy).toBeLessThanOrEqual(TOL);
				expect(r.primal, r.strategy).toBeGreaterThanOrEqual(r.dual);
				expect(r.primal, r.strategy).toBeGreaterThanOrEqual(best);
			}
			const ref = reports[0].primal;
			for (const r of reports) expect(Math.abs(r.primal - ref) / ref, r.strategy).toBeLessThanOrEqual(TOL);
			for (const r of reports.slice(1)) {
				// the out-of-core strategies stay in their budget (counted bytes)
				expect(r.peakMemoryBytes, r.strategy).toBeLessThanOrEqual(BUDGET);
				expect(r.passes, r.strategy).toBeGreaterThanOrEqual(2);
			}
			// cacheHitRate = 1 − reads/visits (design.md): memory reads each row once
			expect(reports[0].cacheHitRate).toBeCloseTo(1 - SHAPE.rows / reports[0].updates, 12);
			for (const r of reports) expect(r.cacheHitRate >= 0 && r.cacheHitRate < 1, r.strategy).toBe(true);
		});
	}

	it('block and selective with zlib-compressed blocks reach the same primal within the budget', async () => {
		const plain = await run('block', 'logistic');
		for (const s of ['block', 'selective'] as StrategyName[]) {
			const packed = await run(s, 'logistic', { compress: true });
			expect(Math.abs(packed.primal - plain.primal) / plain.primal, s).toBeLessThanOrEqual(TOL);
			expect(packed.peakMemoryBytes, s).toBeLessThanOrEqual(BUDGET);
		}
	});

	it('stream keeps to its cache budget and reads at increasing offsets within each pass', async () => {
		const reads: [number, number, number][] = [];
		const r = (await run('stream', 'hinge', { memoryBytes: 600_000, onRead: (pass: number, offset: number, bytes: number) => reads.push([pass, offset, bytes]) })) as StreamReport;
		expect(r.peakResidentBytes).toBeGreaterThan(0);
		expect(r.peakResidentBytes).toBeLessThanOrEqual(r.cacheBytes);
		expect(r.peakMemoryBytes).toBeLessThanOrEqual(600_000);
		// the cache is smaller than the data, so the reader wrapped around at least once
		expect(new Set(reads.map((x) => x[0])).size).toBeGreaterThan(1);
		for (let i = 1; i < reads.length; i++) {
			if (reads[i][0] !== reads[i - 1][0]) continue;
			expect(reads[i][1]).toBe(reads[i - 1][1] + reads[i - 1][2]);
		}
		expect(r.gap).toBeLessThanOrEqual(TOL);
		// a cache smaller than the data makes room first by the shrinking test (Hsieh et al. 2008), not only by dropping segments
		expect(r.evicted.byTest).toBeGreaterThan(0);
	});

	it('stream with a budget that holds every row reads the file once and allocates only what the rows need', async () => {
		// the budget is 5 % over the rows' cache records (stream-cache.ts); a reader that re-reads here wastes a disk pass
		const rowsBytes = streamCacheBytes(SHAPE.rows, SHAPE.rows * SHAPE.nnz, true);
		for (const seed of [1, 2, 3]) {
			const r = (await run('stream', 'hinge', { memoryBytes: budgetForRows('stream', SHAPE.rows, SHAPE.features, false, rowsBytes * 1.05), seed, diskMBps: 20 })) as StreamReport;
			expect(r.passes, `seed ${seed}`).toBe(1);
			expect(r.gap).toBeLessThanOrEqual(TOL);
			// what reaches the trainer is read once: hit rate = 1 − n/visits
			expect(r.cacheHitRate).toBeCloseTo(1 - SHAPE.rows / r.updates, 12);
			expect(r.evicted).toEqual({ byTest: 0, withSegment: 0 });
		}
		const huge = (await run('stream', 'hinge', { memoryBytes: 1 << 30 })) as StreamReport;
		expect(huge.cacheBytes).toBeLessThan(rowsBytes * 1.1);
	});

	it('bad options are errors naming the field', async () => {
		await expect(train({ data, loss: 'hinge', C: -1, strategy: 'memory' })).rejects.toThrow(/^C must be a positive number/);
		await expect(train({ data, loss: 'hinge', C: 1, strategy: 'block', memoryBytes: 1000 })).rejects.toThrow(/^memoryBytes:/);
		await expect(train({ data, loss: 'cubic' as Loss, C: 1, strategy: 'memory' })).rejects.toThrow(/^loss must be one of/);
	});
});
