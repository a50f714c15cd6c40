import { describe, expect, it } from 'vitest';
import { nextGrowth } from '../../../src/lib/engine/calibrate/run.js';

// The calibration ladder's guess at the next doubling's wall-time ratio, which decides whether the next rung
// and the second seed at the top still fit the time share. Arithmetic checked by hand.
describe('calibration ladder growth', () => {
	it('starts at 2.5 and never guesses under 2 (a doubling of rows at least doubles the work)', () => {
		expect(nextGrowth([0.4])).toBe(2.5);
		expect(nextGrowth([0.4, 0.6])).toBe(2);
		expect(nextGrowth([0.5, 1, 2])).toBe(2);
	});

	it('carries a rising ratio on: 2 then 3 per doubling guesses 3 × 1.5', () => {
		expect(nextGrowth([0.5, 1, 3])).toBeCloseTo(4.5, 12);
	});

	it('raises by at most twofold, and ignores rungs too short to show growth', () => {
		// 1 → 1.1 → 5: the step 4.55 rose 4.1-fold, capped at 2
		expect(nextGrowth([1, 1.1, 5])).toBeCloseTo((5 / 1.1) * 2, 12);
		// the first rung (0.05 s) is mostly start-up: only the last step counts
		expect(nextGrowth([0.05, 0.03, 0.09])).toBeCloseTo(3, 12);
	});
});
