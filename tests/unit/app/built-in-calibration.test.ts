/** The calibration shipped with the app must match the current record schema, or every estimate fails. */
import { describe, expect, it } from 'vitest';
import { calibrationRecordSchema } from '../../../src/lib/engine/calibrate/record.js';
import { predict } from '../../../src/lib/engine/model/predict.js';
import builtIn from '../../../src/lib/server/baseline-calibration.json';

describe('built-in calibration', () => {
	it('parses with the record schema and covers all four strategies', () => {
		const rec = calibrationRecordSchema.parse(builtIn);
		expect(new Set(rec.runs.map((r) => r.strategy))).toEqual(new Set(['memory', 'block', 'selective', 'stream']));
		const e = predict(rec.plan, rec);
		expect(e.strategies.map((s) => s.strategy)).toEqual(['memory', 'block', 'selective', 'stream']);
	});
});
