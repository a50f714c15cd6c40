/**
 * Re-score the capacity model on the calibrations and real runs a validation kept with --records,
 * without running anything again: for a change to model/fit.ts or model/predict.ts (not to the
 * calibration or the engine, which need a fresh `validate.ts`). Prints one line per job and the summary.
 *
 * Run: npx tsx benchmarks/rescore.ts DIR [--markdown]
 * --markdown prints the per-job table in the layout of the README's validation table instead.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { calibrationRecordSchema } from '../src/lib/engine/calibrate/record.js';
import { planSchema } from '../src/lib/schemas/plan.js';
import { predict } from '../src/lib/engine/model/predict.js';
import { median, endQuietlyOnClosedPipe } from './report.js';

const dir = process.argv[2];
const markdown = process.argv.includes('--markdown');
if (!dir) {
	console.error('usage: npx tsx benchmarks/rescore.ts DIR (a folder written by validate.ts --records)');
	process.exit(2);
}
const files = readdirSync(dir)
	.filter((f) => /^job\d+\.json$/.test(f))
	.sort((a, b) => Number(a.replace(/\D/g, '')) - Number(b.replace(/\D/g, '')));
endQuietlyOnClosedPipe();
const errs: number[] = [];
const baselineErrs: number[] = [];
let inside = 0;
let passesWithin = 0;
const f1 = (x: number) => x.toFixed(1);
if (markdown) console.log('| job | strategy | rows | loss, C | RAM share | disk MB/s | passes meas / pred | hit rate meas / pred | wall s meas | wall s pred p10 / p50 / p90 | error |\n|---|---|---|---|---|---|---|---|---|---|---|');
else console.log('job strategy      wall meas/pred      error  passes meas/pred  epochs meas/pred  read meas/pred  compute meas/pred');
for (const f of files) {
	const saved = JSON.parse(readFileSync(join(dir, f), 'utf8'));
	const cal = calibrationRecordSchema.parse(saved.calibration);
	const plan = planSchema.parse(saved.plan);
	const est = predict(plan, cal, { memoryBytes: saved.budget ?? undefined }).strategies.find((e) => e.strategy === saved.job.strategy);
	if (!est) continue;
	const reals: { wallSeconds: number; passes: number; epochs: number; readSeconds: number; computeSeconds: number; cacheHitRate: number }[] = saved.reals;
	const mean = (g: (r: (typeof reals)[number]) => number) => reals.reduce((a, r) => a + g(r), 0) / reals.length;
	const wall = mean((r) => r.wallSeconds);
	const err = Math.abs(est.wallSeconds.p50 - wall) / wall;
	errs.push(err);
	baselineErrs.push(Math.abs(saved.baseline - wall) / wall);
	const passesMeasured = mean((r) => r.passes);
	// the validation's pass target: within 1 pass or 20 %, whichever is larger
	if (Math.abs(est.passes.p50 - passesMeasured) <= Math.max(1, 0.2 * passesMeasured)) passesWithin++;
	if (wall >= est.wallSeconds.p10 && wall <= est.wallSeconds.p90) inside++;
	const read = est.breakdown.prepare + est.breakdown.read;
	const j = saved.job;
	const w = est.wallSeconds;
	if (markdown) {
		console.log(
			`| ${j.id} | ${j.strategy} | ${j.rows} | ${j.loss}, ${j.C} | ${j.strategy === 'memory' ? 'all' : j.fraction} | ${j.diskMBps} | ${f1(mean((r) => r.passes))} / ${f1(est.passes.p50)} | ${mean((r) => r.cacheHitRate).toFixed(3)} / ${est.cacheHitRate.toFixed(3)} | ${f1(wall)} | ${f1(w.p10)} / ${f1(w.p50)} / ${f1(w.p90)} | ${(err * 100).toFixed(0)} % |`
		);
		continue;
	}
	console.log(
		`${String(saved.job.id).padStart(3)} ${saved.job.strategy.padEnd(10)} ${f1(wall).padStart(7)} / ${f1(est.wallSeconds.p50).padEnd(7)} ${(err * 100).toFixed(0).padStart(4)} %  ${f1(mean((r) => r.passes)).padStart(6)} / ${f1(est.passes.p50).padEnd(7)} ${f1(mean((r) => r.epochs)).padStart(6)} / ${f1(est.epochs).padEnd(7)} ${f1(mean((r) => r.readSeconds)).padStart(5)} / ${f1(read).padEnd(6)} ${f1(mean((r) => r.computeSeconds)).padStart(6)} / ${f1(est.breakdown.compute)}`
	);
}
console.log(
	`median ${(median(errs) * 100).toFixed(0)} %, worst ${(Math.max(...errs) * 100).toFixed(0)} % over ${errs.length} jobs; model ÷ baseline median ${(median(errs) / median(baselineErrs)).toFixed(2)}; passes within 1 or 20 % for ${passesWithin}; measured wall inside p10–p90 for ${inside}`
);
