import { describe, expect, it } from 'vitest';
import { measureKernel } from '../../../src/lib/engine/calibrate/kernel.js';

describe('measureKernel', () => {
	for (const real of [true, false])
		it(`times whole dual coordinate descent visits over the row set it was asked for (${real ? 'real' : 'binary'} values)`, () => {
			const rowBytes = 1 << 20;
			const p = measureKernel(20, 5000, { real, seconds: 0.01, rowBytes, visit: true });
			expect(p.nnzPerRow).toBe(20);
			expect(p.features).toBe(5000);
			expect(Number.isFinite(p.nsPerUpdate) && p.nsPerUpdate > 0).toBe(true);
			const perRow = 20 * (real ? 8 : 4);
			expect(p.rowBytes).toBe(Math.floor(rowBytes / (real ? 8 : 4) / 20) * perRow);
		});
});
