import { describe, expect, it } from 'vitest';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { generateRows, generateToFile } from '../../../../src/lib/engine/data/generate.js';
import { popularityOrder } from '../../../../src/lib/engine/solver/renumber.js';
import { train } from '../../../../src/lib/engine/solver/train.js';
import { LIBLINEAR_TRAIN, liblinearWeights, primalOf } from './reference.js';

describe('renumbering features by popularity', () => {
	it('gives the most frequent feature index 0 and keeps a permutation', () => {
		// counts: feature 5 ×3, feature 2 ×2, feature 0 ×1, the rest 0
		const order = popularityOrder(Uint32Array.of(5, 2, 5, 0, 5, 2), 8);
		expect(order[5]).toBe(0);
		expect(order[2]).toBe(1);
		expect(order[0]).toBe(2);
		expect([...order].sort((a, b) => a - b)).toEqual([0, 1, 2, 3, 4, 5, 6, 7]);
	});

	describe.skipIf(!existsSync(LIBLINEAR_TRAIN))('the memory strategy on a weight vector past the threshold', () => {
		it('reaches liblinear-train’s primal and returns w in the file’s own feature order', async () => {
			// 600 000 features → 4.8 MB of weights, past RENUMBER_MIN_WEIGHT_BYTES, so the strategy renumbers
			const opts = { rows: 3000, features: 600_000, nnz: 30, positive: 0.4, values: 'binary' as const, seed: 5 };
			const dir = mkdtempSync(join(tmpdir(), 'loadline-renumber-'));
			try {
				const file = join(dir, 'rows.bin');
				await generateToFile(opts, file, 'bin');
				const rows = generateRows(opts);
				const ours = await train({ data: file, loss: 'hinge', C: 1, tol: 1e-4, strategy: 'memory', keepWeights: true });
				// reference: Debian liblinear-tools (-s 3, -B -1), primal of its model computed here from the weights
				const ref = primalOf(rows, liblinearWeights(rows, 'hinge', 1, 1e-6), 'hinge', 1);
				expect(Math.abs(ours.primal - ref.primal) / ref.primal).toBeLessThan(1e-3);
				// the returned w, applied to the rows as written (not renumbered), has the primal the run reported
				expect(primalOf(rows, ours.w!, 'hinge', 1).primal).toBeCloseTo(ours.primal, 6);
			} finally {
				rmSync(dir, { recursive: true, force: true });
			}
		});
	});
});

describe('rows after renumbering', () => {
	it('are sorted by their new indices, with each value still beside its feature', async () => {
		const { renumberByPopularity } = await import('../../../../src/lib/engine/solver/renumber.js');
		const rows = generateRows({ rows: 400, features: 5000, nnz: 20, values: 'real', seed: 9 });
		const before = new Map<string, number>();
		for (let i = 0; i < rows.n; i++) for (let p = rows.rowPtr[i]; p < rows.rowPtr[i + 1]; p++) before.set(`${i}:${rows.indices[p]}`, rows.values![p]);
		const newIndex = renumberByPopularity(rows);
		for (let i = 0; i < rows.n; i++) {
			for (let p = rows.rowPtr[i] + 1; p < rows.rowPtr[i + 1]; p++) expect(rows.indices[p]).toBeGreaterThan(rows.indices[p - 1]);
		}
		const oldOf = new Uint32Array(rows.d);
		for (let f = 0; f < rows.d; f++) oldOf[newIndex[f]] = f;
		for (let i = 0; i < rows.n; i++) for (let p = rows.rowPtr[i]; p < rows.rowPtr[i + 1]; p++) expect(rows.values![p]).toBe(before.get(`${i}:${oldOf[rows.indices[p]]}`));
	});
});
