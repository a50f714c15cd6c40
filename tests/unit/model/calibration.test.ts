import { describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { cpus, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { calibrate, type CalibrationProgress } from '../../../src/lib/engine/calibrate/run.js';
import { calibrationRecordSchema } from '../../../src/lib/engine/calibrate/record.js';
import { predict } from '../../../src/lib/engine/model/predict.js';
import { generateToFile, GENERATE_DEFAULTS } from '../../../src/lib/engine/data/generate.js';
import { train } from '../../../src/lib/engine/solver/train.js';
import { aPlan } from './plan-factory.js';

describe('a small calibration', () => {
	// other work on a shared machine swings wall times up to 2× between minutes (benchmarks/results/validate.md),
	// so a failed comparison gets one fresh calibration and fresh real runs before it counts; on a machine
	// oversubscribed more than twice over, identical runs differ up to 5× and the comparison means nothing
	it.skipIf(loadavg()[0] > 2 * cpus().length)('completes, reports progress, and estimates a real run at its own size within 25 %', async () => {
		const first = await attempt();
		const errors = first.every((e) => e.error < 0.25) ? first : await attempt();
		for (const e of errors) expect(e.error, e.text).toBeLessThan(0.25);
	});
});

async function attempt(): Promise<{ error: number; text: string }[]> {
	const out: { error: number; text: string }[] = [];
	const plan = aPlan({ dataset: { rows: 4000, features: 50_000, nnzPerRow: 20, valueKind: 'real' }, machine: { diskMBps: 300, diskInterface: 'sata3' } });
	const seen: CalibrationProgress[] = [];
	const rec = await calibrate(plan, { strategies: ['memory', 'stream'], budgetSeconds: 20, onProgress: (p) => seen.push(p) });
	expect(calibrationRecordSchema.safeParse(JSON.parse(JSON.stringify(rec))).success).toBe(true);
	expect(rec.durationSeconds).toBeLessThan(30);
	expect(new Set(seen.map((p) => p.phase))).toEqual(new Set(['machine', 'kernel', 'decode', 'memory', 'stream', 'done']));
	expect(seen.every((p, i) => i === 0 || p.fraction >= seen[i - 1].fraction)).toBe(true);
	expect(Math.max(...rec.runs.map((r) => r.rows))).toBe(4000);

	// the plan's machine is this machine as calibrated, so the estimate is for the run below
	const here = { ...plan, machine: { ...plan.machine, coreSpeed: rec.machine.coreSpeed } };
	const e = predict(here, rec);
	expect(e.extrapolation.factor).toBe(1);
	const dir = mkdtempSync(join(tmpdir(), 'loadline-cal-test-'));
	try {
		const ds = plan.dataset;
		// real runs on fresh data (seeds the calibration did not use); the median of three damps other load on the machine
		const files: string[] = [];
		for (const seed of [3, 4, 5]) {
			const data = join(dir, `rows-${seed}.bin`);
			await generateToFile({ rows: ds.rows, features: ds.features, nnz: ds.nnzPerRow, positive: ds.positiveFraction, noise: GENERATE_DEFAULTS.noise, skew: GENERATE_DEFAULTS.skew, values: ds.valueKind, seed }, data, 'bin');
			files.push(data);
		}
		for (const s of ['memory', 'stream'] as const) {
			const cal = rec.runs.find((r) => r.strategy === s && r.rows === ds.rows)!;
			const walls: number[] = [];
			for (const [i, data] of files.entries()) {
				const real = await train({ data, loss: 'hinge', C: 1, tol: 0.01, strategy: s, seed: 3 + i, memoryBytes: cal.memoryBytes ?? undefined, diskMBps: cal.diskMBps ?? undefined });
				walls.push(real.wallSeconds);
			}
			const measured = walls.sort((a, b) => a - b)[1];
			const predicted = e.strategies.find((x) => x.strategy === s)!.wallSeconds.p50;
			out.push({ error: Math.abs(predicted - measured) / measured, text: `${s}: predicted ${predicted.toFixed(3)} s, measured ${walls.map((w) => w.toFixed(3))} s` });
		}
	} finally {
		rmSync(dir, { recursive: true, force: true });
	}
	return out;
}
