/**
 * Back-test of the capacity model inside calibrations alone: for each strategy of each record,
 * fit on every run below the ladder's top rung, predict the top rung (its rows, cache budget
 * and reader speed, on the calibration machine itself), and compare with what that run measured.
 * It judges a change to model/fit.ts on data the validation jobs never see.
 *
 * Run: npx tsx benchmarks/backtest.ts [--hold N] FILE|DIR … (calibration records, or folders of validate.ts --records)
 * --hold N (default 1) holds out the top N rungs and predicts the top one: N = 2 extrapolates about 4× in rows.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { calibrationRecordSchema, type CalibrationRecord } from '../src/lib/engine/calibrate/record.js';
import { predict } from '../src/lib/engine/model/predict.js';
import { median, endQuietlyOnClosedPipe } from './report.js';

const args = process.argv.slice(2);
const holdAt = args.indexOf('--hold');
const hold = holdAt >= 0 ? Number(args.splice(holdAt, 2)[1]) : 1;
const paths = args;
if (paths.length === 0) {
	console.error('usage: npx tsx benchmarks/backtest.ts FILE|DIR …');
	process.exit(2);
}
const files = paths.flatMap((p) => (statSync(p).isDirectory() ? readdirSync(p).filter((f) => f.endsWith('.json')).map((f) => join(p, f)) : [p]));
endQuietlyOnClosedPipe();
const ratio = (pred: number, meas: number) => Math.log(pred / meas);
const errs: Record<string, number[]> = { wall: [], compute: [], epochs: [], passes: [] };
for (const file of files.sort()) {
	const raw = JSON.parse(readFileSync(file, 'utf8'));
	const rec: CalibrationRecord = calibrationRecordSchema.parse(raw.kind === 'loadline-calibration' ? raw : raw.calibration);
	for (const s of new Set(rec.runs.map((r) => r.strategy))) {
		const runs = rec.runs.filter((r) => r.strategy === s && r.capped !== true);
		const rungs = [...new Set(runs.map((r) => r.rows))].sort((a, b) => b - a);
		const top = rungs[0];
		const cut = rungs[Math.min(hold, rungs.length) - 1];
		const held = runs.filter((r) => r.rows === top);
		const rest = rec.runs.filter((r) => !(r.strategy === s && r.rows >= cut));
		if (rest.filter((r) => r.strategy === s && r.capped !== true).length < 3) continue;
		const sub: CalibrationRecord = { ...rec, runs: rest };
		for (const run of held) {
			const plan = {
				...rec.plan,
				dataset: { ...rec.plan.dataset, rows: run.rows, features: run.features ?? rec.features, format: 'binary' as const, compressed: false, bytesOnDisk: undefined },
				machine: { ...rec.plan.machine, coreSpeed: rec.machine.coreSpeed, diskMBps: run.diskMBps ?? rec.decode.binaryMBps * 10, diskInterface: 'pcie5x4' as const },
				training: { ...rec.plan.training, cValues: 1, folds: 1 }
			};
			const e = predict(plan, sub, { memoryBytes: run.memoryBytes ?? undefined }).strategies.find((x) => x.strategy === s);
			if (!e) continue;
			const r = { wall: ratio(e.wallSeconds.p50, run.wallSeconds), compute: ratio(e.breakdown.compute, run.computeSeconds), epochs: ratio(e.epochs, run.epochs), passes: ratio(e.passes.p50, run.passes) };
			for (const k of Object.keys(errs)) errs[k].push(Math.abs(r[k as keyof typeof r]));
			console.log(
				`${file.split('/').pop()!.padEnd(28)} ${s.padEnd(9)} rows ${String(run.rows).padStart(6)} wall ${run.wallSeconds.toFixed(2)}/${e.wallSeconds.p50.toFixed(2)}  compute ${run.computeSeconds.toFixed(2)}/${e.breakdown.compute.toFixed(2)}  epochs ${run.epochs.toFixed(0)}/${e.epochs.toFixed(0)}  passes ${run.passes}/${e.passes.p50.toFixed(1)}`
			);
		}
	}
}
const pct = (x: number) => `${((Math.exp(x) - 1) * 100).toFixed(0)} %`;
for (const [k, v] of Object.entries(errs)) if (v.length) console.log(`${k}: median |error| ${pct(median(v))}, worst ${pct(Math.max(...v))} over ${v.length} held-out runs`);
