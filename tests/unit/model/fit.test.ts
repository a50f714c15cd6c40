import { describe, expect, it } from 'vitest';
import { evalLinear, features, fitModel, rowsTerm } from '../../../src/lib/engine/model/fit.js';
import { fitLinear } from '../../../src/lib/engine/model/least-squares.js';
import { predict } from '../../../src/lib/engine/model/predict.js';
import { aPlan } from './plan-factory.js';
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

	it('reads epochs that settle with rows as settling: a finite-size term fading like 1/n extrapolates to its limit', () => {
		const rec = aRecord();
		// memory epochs 300 · exp(−1.5 · 1000/n): 67 at 1 000 rows, 251 at 8 000, 289 at 40 000, 300 in the limit
		// (an invented law in the model's own form: the fit must recover it)
		const settle = (n: number) => 300 * Math.exp(-1.5 * (1000 / n));
		const runs = [1000, 2000, 4000, 8000].map((rows) => ({ ...rec.runs.find((r) => r.strategy === 'memory')!, rows, epochs: settle(rows) }));
		const fit = fitModel({ ...rec, runs }).strategies.memory!;
		const at = (rows: number) => Math.exp(evalLinear(fit.epochs, features({ rows, cacheFraction: 1, updatesPerRead: 1 })));
		expect(at(40_000) / settle(40_000)).toBeCloseTo(1, 6);
		expect(at(1e9)).toBeLessThan(300.001);
		// ln ln n through the same four rungs would keep climbing: over 400 epochs at 40 000 rows
		const lnln = fitLinear(runs.map((r) => [Math.log(Math.log(r.rows))]), runs.map((r) => Math.log(r.epochs)));
		expect(Math.exp(evalLinear(lnln, [Math.log(Math.log(40_000))]))).toBeGreaterThan(400);
	});

	it('holds the curves flat below the smallest calibrated rows, where nothing was measured', () => {
		const rec = aRecord();
		const smallest = fitModel(rec).strategies.memory!.rowsMin;
		const plan = aPlan();
		const epochs = (rows: number) => predict({ ...plan, dataset: { ...plan.dataset, rows } }, rec).strategies.find((e) => e.strategy === 'memory')!.epochs;
		expect(epochs(Math.round(smallest / 10))).toBeCloseTo(epochs(smallest), 9);
		expect(rowsTerm(smallest / 10)).toBeLessThan(rowsTerm(smallest));
	});

	it('widens the range by how much the machine speed moved during the calibration', () => {
		const steady = aRecord();
		// the reference kernel before the block runs read 25 % slower: other work shared the machine then
		const busy = { ...steady, runs: steady.runs.map((r) => (r.strategy === 'block' ? { ...r, referenceNs: 500 } : r)) };
		expect(fitModel(steady).loadSpread).toBe(0);
		// sd of ln over {400 (the median), 400, 500}
		const l = [400, 400, 500].map(Math.log);
		const m = (l[0] + l[1] + l[2]) / 3;
		expect(fitModel(busy).loadSpread).toBeCloseTo(Math.sqrt(l.reduce((a, x) => a + (x - m) ** 2, 0) / 2), 9);
		const plan = aPlan();
		const spread = (rec: typeof steady) => {
			const w = predict(plan, rec).strategies[0].wallSeconds;
			return w.p90 / w.p10;
		};
		expect(spread(busy)).toBeGreaterThan(spread(steady));
		expect(predict(plan, busy).strategies[0].wallSeconds.p50).toBeCloseTo(predict(plan, steady).strategies[0].wallSeconds.p50, 9);
	});

	it('carries compute measured on a smaller weight vector to the plan through the kernel line at each dimension', () => {
		const rec = aRecord();
		const small = rec.features / 100;
		// runs on data with a hundredth of the features, whose kernel costs half as much per update there
		const narrow = {
			...rec,
			kernel: [...rec.kernel, ...rec.kernel.map((p) => ({ ...p, features: small, nsPerUpdate: p.nsPerUpdate / 2 }))],
			runs: rec.runs.map((r) => ({ ...r, features: small, computeSeconds: r.computeSeconds / 2, wallSeconds: r.wallSeconds - r.computeSeconds / 2 }))
		};
		const plan = aPlan();
		const wide = predict(plan, { ...rec, kernel: narrow.kernel });
		const fromNarrow = predict(plan, narrow);
		for (const s of ['memory', 'block', 'selective', 'stream'] as const) {
			const compute = (e: typeof wide) => e.strategies.find((x) => x.strategy === s)!.breakdown.compute;
			expect(compute(fromNarrow) / compute(wide), s).toBeCloseTo(1, 2);
		}
	});

	it('fits time outside the read and compute timers that grows with rows × passes, and adds it to block and selective wall time', () => {
		const rec = aRecord();
		const perRowPass = 2e-7;
		const busy = { ...rec, runs: rec.runs.map((r) => (r.strategy === 'selective' ? { ...r, wallSeconds: r.wallSeconds + perRowPass * r.rows * r.passes } : r)) };
		expect(fitModel(rec).strategies.selective!.secondsPerRowPass).toBeCloseTo(0, 12);
		expect(fitModel(busy).strategies.selective!.secondsPerRowPass).toBeCloseTo(perRowPass, 12);
		// stream's passes rise with a faster disk, so its overhead stays fixed
		expect(fitModel({ ...rec, runs: rec.runs.map((r) => (r.strategy === 'stream' ? { ...r, wallSeconds: r.wallSeconds + perRowPass * r.rows * r.passes } : r)) }).strategies.stream!.secondsPerRowPass).toBe(0);
		const plan = aPlan();
		const at = (r: typeof rec) => predict(plan, r).strategies.find((e) => e.strategy === 'selective')!;
		const extra = at(busy).wallSeconds.p50 - at(rec).wallSeconds.p50;
		const e = at(busy);
		// passes here count the engine's passes (no conversion: the plan's rows are binary)
		expect(extra).toBeCloseTo(perRowPass * plan.dataset.rows * e.passes.p50 * (rec.machine.coreSpeed / plan.machine.coreSpeed), 3);
	});
});
