import { describe, expect, it } from 'vitest';
import { evalLinear, features, fitModel } from '../../../src/lib/engine/model/fit.js';
import { fitLinear } from '../../../src/lib/engine/model/least-squares.js';
import { aRecord } from './record-factory.js';

describe('fitModel', () => {
	it('takes the throttle ratio at the largest throttled rows, where small-file effects have gone', () => {
		const rec = aRecord();
		const top = Math.max(...rec.runs.filter((r) => r.strategy === 'selective').map((r) => r.rows));
		// smaller rungs read a third of the time bytes ÷ throttle implies (reads hidden behind compute)
		const bent = { ...rec, runs: rec.runs.map((r) => (r.strategy === 'selective' && r.rows < top ? { ...r, readSeconds: r.readSeconds / 3 } : r)) };
		expect(fitModel(bent).strategies.selective!.throttleRatio).toBeCloseTo(1.05, 6);
		expect(fitModel(rec).strategies.selective!.throttleRatio).toBeCloseTo(1.05, 6);
	});

	it('weighs the top rungs most: a stray smallest rung barely moves the curve at the top', () => {
		const rec = aRecord();
		const small = Math.min(...rec.runs.filter((r) => r.strategy === 'memory').map((r) => r.rows));
		const stray = { ...rec, runs: rec.runs.map((r) => (r.strategy === 'memory' && r.rows === small ? { ...r, epochs: r.epochs / 3 } : r)) };
		const at = features({ rows: 8000, cacheFraction: 1, updatesPerRead: 1 });
		const before = Math.exp(evalLinear(fitModel(rec).strategies.memory!.epochs, at));
		const after = Math.exp(evalLinear(fitModel(stray).strategies.memory!.epochs, at));
		expect(Math.abs(after / before - 1)).toBeLessThan(0.05);
		// the same runs fitted without weights move several times as much
		const unweighted = (runs: typeof rec.runs) => {
			const mem = runs.filter((r) => r.strategy === 'memory');
			const f = fitLinear(
				mem.map(features),
				mem.map((r) => Math.log(r.epochs)),
				[[0, Infinity], [0, 0], [0, 0]]
			);
			return Math.exp(evalLinear(f, at));
		};
		expect(Math.abs(unweighted(stray.runs) / unweighted(rec.runs) - 1)).toBeGreaterThan(0.15);
	});
});
