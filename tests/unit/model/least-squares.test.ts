import { describe, expect, it } from 'vitest';
// The ridge of 1e-9 in the normal equations moves exact answers by about 1e-9: compared to 6 decimals.
import { evalLinear, fitLinear, leverage } from '../../../src/lib/engine/model/least-squares.js';

describe('fitLinear', () => {
	it('recovers an exact line', () => {
		const xs = [0, 1, 2, 3, 4].map((x) => [x]);
		const f = fitLinear(
			xs,
			xs.map(([x]) => 2 + 3 * x)
		);
		expect(f.coef[0]).toBeCloseTo(2, 6);
		expect(f.coef[1]).toBeCloseTo(3, 6);
		expect(f.sd).toBeCloseTo(0, 6);
	});

	it('matches the closed form of weighted least squares with one regressor', () => {
		// slope = Σw(x − x̄)(y − ȳ) / Σw(x − x̄)², x̄ and ȳ weighted means (the weighted normal equations solved by hand; from memory)
		const x = [1, 2, 3, 4, 5, 6];
		const y = [1.2, 1.9, 3.4, 3.9, 5.5, 5.8];
		const w = [0.1, 0.5, 1, 2, 4, 8];
		const sw = w.reduce((a, v) => a + v, 0);
		const xm = x.reduce((a, v, i) => a + w[i] * v, 0) / sw;
		const ym = y.reduce((a, v, i) => a + w[i] * v, 0) / sw;
		const slope = x.reduce((a, v, i) => a + w[i] * (v - xm) * (y[i] - ym), 0) / x.reduce((a, v, i) => a + w[i] * (v - xm) ** 2, 0);
		const f = fitLinear(
			x.map((v) => [v]),
			y,
			[],
			w
		);
		expect(f.coef[1]).toBeCloseTo(slope, 6);
		expect(f.coef[0]).toBeCloseTo(ym - slope * xm, 6);
		// scaling every weight by the same factor changes nothing
		const g = fitLinear(
			x.map((v) => [v]),
			y,
			[],
			w.map((v) => v * 1000)
		);
		expect(g.coef[1]).toBeCloseTo(f.coef[1], 6);
		expect(g.sd).toBeCloseTo(f.sd, 6);
	});

	it('lets a point of weight near zero go unheard', () => {
		const xs = [1, 2, 3, 4].map((x) => [x]);
		const y = [100, 2, 3, 4];
		const f = fitLinear(xs, y, [], [1e-12, 1, 1, 1]);
		expect(evalLinear(f, [5])).toBeCloseTo(5, 6);
		const unweighted = fitLinear(xs, y);
		expect(Math.abs(evalLinear(unweighted, [5]) - 5)).toBeGreaterThan(10);
	});

	it('keeps slope bounds under weights', () => {
		const xs = [1, 2, 3, 4].map((x) => [x]);
		const f = fitLinear(xs, [4, 3, 2, 1], [[0, Infinity]], [1, 2, 3, 4]);
		expect(f.coef[1]).toBe(0);
	});

	it('has a leverage that grows away from where the weight sits', () => {
		const xs = [1, 2, 3, 4, 5].map((x) => [x]);
		const y = [1, 2.1, 2.9, 4.2, 5];
		const f = fitLinear(xs, y, [], [0.01, 0.05, 0.2, 1, 4]);
		expect(leverage(f, [5])).toBeLessThan(leverage(f, [1]));
		expect(leverage(f, [8])).toBeGreaterThan(leverage(f, [5]));
	});
});
