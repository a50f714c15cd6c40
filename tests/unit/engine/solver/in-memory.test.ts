import { describe, expect, it } from 'vitest';
import { existsSync } from 'node:fs';
import type { Loss } from '../../../../src/lib/engine/types.js';
import { solveRows } from '../../../../src/lib/engine/solver/solve-rows.js';
import { addMargins, emptySums, kktViolation } from '../../../../src/lib/engine/solver/objective.js';
import { sliceRows } from '../../../../src/lib/engine/solver/rows.js';
import { generateRows } from '../../../../src/lib/engine/data/generate.js';
import { BREAST_CANCER_CSV, LIBLINEAR_TRAIN, breastCancerRows, liblinearWeights, primalOf } from './reference.js';

const LOSSES: Loss[] = ['hinge', 'sqhinge', 'logistic'];
const CS = [0.1, 1, 10];
const haveReference = existsSync(LIBLINEAR_TRAIN) && existsSync(BREAST_CANCER_CSV);

describe.skipIf(!haveReference)('in-memory dual coordinate descent against liblinear-train', () => {
	// read only when the reference is installed: a skipped suite still runs its body
	const rows = haveReference ? breastCancerRows() : (undefined as never);
	for (const loss of LOSSES)
		for (const C of CS) {
			it(`breast cancer, ${loss}, C = ${C}`, () => {
				// Reference: Debian liblinear-tools 2.3 (-s 3 / 1 / 7, -B -1, tight -e so its model is near-optimal);
				// data: UCI Wisconsin diagnostic breast cancer from Debian python3-sklearn, features scaled to [0, 1].
				const ref = primalOf(rows, liblinearWeights(rows, loss, C, 1e-6), loss, C);
				const ours = solveRows(rows, { loss, C, tol: 1e-6, maxEpochs: 100_000, seed: 7 });
				// the brief's acceptance bounds: primal within 0.1 %, accuracy within 0.5 points
				expect(Math.abs(ours.primal - ref.primal) / ref.primal).toBeLessThan(1e-3);
				expect(Math.abs(ours.accuracy - ref.accuracy)).toBeLessThanOrEqual(0.005);
				// our reported primal is the primal of our w, recomputed independently here
				expect(primalOf(rows, ours.w, loss, C).primal).toBeCloseTo(ours.primal, 6);
			});
		}
});

describe.skipIf(!existsSync(BREAST_CANCER_CSV))('optimality and weak duality', () => {
	// read only when the reference is installed: a skipped suite still runs its body
	const rows = existsSync(BREAST_CANCER_CSV) ? breastCancerRows() : (undefined as never);
	for (const loss of LOSSES) {
		it(`${loss}: KKT conditions hold at convergence and primal ≥ dual after every epoch`, () => {
			const gaps: number[] = [];
			const s = solveRows(rows, { loss, C: 1, tol: 1e-8, maxEpochs: 100_000, seed: 3, onEpoch: (p) => gaps.push(p.gap) });
			// weak duality (Hsieh et al. 2008, Section 2; Yu, Huang, Lin 2011, Section 3): D(α) ≤ P(w) for feasible α
			expect(gaps.length).toBeGreaterThan(1);
			expect(Math.min(...gaps)).toBeGreaterThanOrEqual(-1e-12);
			expect(s.primal).toBeGreaterThanOrEqual(s.dual);
			// KKT conditions of the dual (projected gradient zero); tolerance 1e-3 on scaled data, and 1e-2 in
			// log-odds units for logistic, where α near 0 makes the gradient steep: common practice, no source
			expect(kktViolation(rows, s.w, loss, 1, s.alpha, s.comp)).toBeLessThan(loss === 'logistic' ? 1e-2 : 1e-3);
			// α stays in its box
			const upper = loss === 'sqhinge' ? Infinity : 1;
			expect(s.alpha.every((a) => a >= 0 && a <= upper)).toBe(true);
		});
	}

	it('a loose tolerance stops early with the gap at or under it', () => {
		const s = solveRows(rows, { loss: 'hinge', C: 1, tol: 0.01, maxEpochs: 10_000, seed: 1 });
		expect(s.gap).toBeLessThanOrEqual(0.01);
		expect(s.epochs).toBeLessThan(200);
	});

	it('the epoch limit stops the run', () => {
		const s = solveRows(rows, { loss: 'hinge', C: 10, tol: 1e-12, maxEpochs: 5, seed: 1 });
		expect(s.epochs).toBe(5);
		expect(s.updates).toBeGreaterThan(0);
	});
});

describe.skipIf(!existsSync(LIBLINEAR_TRAIN))('in-memory dual coordinate descent against liblinear-train on generated rows', () => {
	// a shape on which liblinear-train converges within its 1000-iteration limit at every C tested
	const rows = generateRows({ rows: 1000, features: 2000, nnz: 20, positive: 0.4, noise: 0.02, skew: 1, values: 'binary', seed: 5 });
	for (const loss of LOSSES)
		for (const C of CS) {
			it(`generated, ${loss}, C = ${C}`, () => {
				// Reference: Debian liblinear-tools 2.3 on the same rows written as svmlight text (-B -1, tight -e)
				const ref = primalOf(rows, liblinearWeights(rows, loss, C, 1e-6), loss, C);
				const ours = solveRows(rows, { loss, C, tol: 1e-6, maxEpochs: 100_000, seed: 9 });
				expect(Math.abs(ours.primal - ref.primal) / ref.primal).toBeLessThan(1e-3);
				expect(Math.abs(ours.accuracy - ref.accuracy)).toBeLessThanOrEqual(0.005);
			});
		}
});

describe('a trained model generalizes on generated rows', () => {
	it('beats the majority class on held-out rows from the same generator', () => {
		// the generator's promise (labels from a hidden sparse weight vector, 5 % flipped): common practice, no source
		const all = generateRows({ rows: 12_000, features: 5000, nnz: 30, positive: 0.3, noise: 0.05, skew: 1, values: 'binary', seed: 21 });
		const train = sliceRows(all, 0, 10_000);
		const test = sliceRows(all, 10_000, 12_000);
		const s = solveRows(train, { loss: 'logistic', C: 1, tol: 0.01, maxEpochs: 200, seed: 1 });
		const sums = addMargins(emptySums(), test, s.w, 'logistic');
		const heldOut = sums.correct / test.n;
		let positives = 0;
		for (let i = 0; i < test.n; i++) if (test.labels[i] > 0) positives++;
		const majority = Math.max(positives, test.n - positives) / test.n;
		expect(heldOut).toBeGreaterThan(majority + 0.1);
	});
});
