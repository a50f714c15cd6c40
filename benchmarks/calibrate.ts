/**
 * Wall time of a whole default calibration (all four strategies, default budget), which must stay
 * under 90 s on the 2-core machine the product runs on, for plans of different shapes: the
 * example plan, a plan whose weights fill 128 MiB, a logistic plan on a small machine (cache
 * fractions below one: block and selective split the data), and a slow-disk text plan. Then a
 * small plan at the calibration's own size: its estimated wall time against real runs.
 *
 * Run: npx tsx benchmarks/calibrate.ts [--out benchmarks/results/calibrate.md]
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { cpus, loadavg, tmpdir, totalmem } from 'node:os';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import type { Plan } from '../src/lib/schemas/plan.js';
import { planSchema } from '../src/lib/schemas/plan.js';
import { calibrate } from '../src/lib/engine/calibrate/run.js';
import { predict } from '../src/lib/engine/model/predict.js';
import { generateToFile, GENERATE_DEFAULTS } from '../src/lib/engine/data/generate.js';
import { train } from '../src/lib/engine/solver/train.js';

const LIMIT_SECONDS = 90;
const { values: args } = parseArgs({ options: { out: { type: 'string', default: 'benchmarks/results/calibrate.md' } } });

const example = planSchema.parse(JSON.parse(readFileSync('tests/fixtures/plan-example.json', 'utf8')));
const plans: { name: string; plan: Plan }[] = [
	{ name: 'example plan (tests/fixtures/plan-example.json)', plan: example },
	{ name: 'wide: 16.7 M features (128 MiB of weights), k = 100', plan: { ...example, dataset: { ...example.dataset, features: 2 ** 24, nnzPerRow: 100 } } },
	{
		name: 'logistic, C = 10, 1 GiB machine, 100 M rows (fractions < 1)',
		plan: { ...example, dataset: { ...example.dataset, rows: 100_000_000 }, machine: { ...example.machine, ramGiB: 1 }, training: { ...example.training, loss: 'logistic', C: 10 } }
	},
	{
		name: 'text rows on a 150 MB/s disk, squared hinge, k = 10',
		plan: { ...example, dataset: { ...example.dataset, format: 'text', nnzPerRow: 10 }, machine: { ...example.machine, diskMBps: 150 }, training: { ...example.training, loss: 'sqhinge' } }
	}
];

const lines: string[] = [];
const started = new Date();
const load = loadavg()[0];
for (const { name, plan } of plans) {
	const rec = await calibrate(plan, {});
	const per = ['memory', 'block', 'selective', 'stream'].map((s) => `${s} ${rec.runs.filter((r) => r.strategy === s).length}`).join(', ');
	const capped = rec.runs.filter((r) => r.capped).length;
	const row = `| ${name} | ${rec.durationSeconds.toFixed(1)} | ${rec.durationSeconds <= LIMIT_SECONDS ? 'yes' : 'no'} | ${rec.runs.length} (${per}) | ${capped} |`;
	console.log(row);
	lines.push(row);
}
// point 7 of the capacity model, in wall time (a test may not time runs): a small plan at the calibration's own
// size, estimated from its calibration and run for real on fresh data (seeds the calibration did not use)
const small: Plan = { ...example, dataset: { ...example.dataset, rows: 16_000, features: 50_000, nnzPerRow: 20 }, machine: { ...example.machine, diskMBps: 300 }, training: { ...example.training, cValues: 1, folds: 1 } };
const smallRec = await calibrate(small, { budgetSeconds: 40 });
const here: Plan = { ...small, machine: { ...small.machine, coreSpeed: smallRec.machine.coreSpeed } };
const est = predict(here, smallRec);
const dir = mkdtempSync(join(tmpdir(), 'loadline-bench-cal-'));
const atSize: string[] = [];
try {
	const files: string[] = [];
	for (const seed of [3, 4, 5]) {
		const path = join(dir, `rows-${seed}.bin`);
		const ds = small.dataset;
		await generateToFile({ rows: ds.rows, features: ds.features, nnz: ds.nnzPerRow, positive: ds.positiveFraction, noise: GENERATE_DEFAULTS.noise, skew: GENERATE_DEFAULTS.skew, values: ds.valueKind, seed }, path, 'bin');
		files.push(path);
	}
	for (const e of est.strategies) {
		const cal = smallRec.runs.find((r) => r.strategy === e.strategy && r.rows === small.dataset.rows);
		if (!cal) {
			atSize.push(`| ${e.strategy} | not calibrated at ${small.dataset.rows} rows | | | |`);
			continue;
		}
		const walls: number[] = [];
		for (const [i, data] of files.entries())
			walls.push((await train({ data, loss: small.training.loss, C: small.training.C, tol: small.training.tol, strategy: e.strategy, seed: 3 + i, memoryBytes: cal.memoryBytes ?? undefined, diskMBps: cal.diskMBps ?? undefined })).wallSeconds);
		walls.sort((a, b) => a - b);
		const err = Math.abs(e.wallSeconds.p50 - walls[1]) / walls[1];
		const row = `| ${e.strategy} | ${e.wallSeconds.p10.toFixed(2)} / ${e.wallSeconds.p50.toFixed(2)} / ${e.wallSeconds.p90.toFixed(2)} | ${walls.map((w) => w.toFixed(2)).join(', ')} | ${(err * 100).toFixed(0)} % | ${err <= 0.25 ? 'yes' : 'no'} |`;
		console.log(row);
		atSize.push(row);
	}
} finally {
	rmSync(dir, { recursive: true, force: true });
}

const cpu = cpus();
const report = `# Calibration time

Machine: ${cpu[0]?.model?.trim()} × ${cpu.length}, ${(totalmem() / 2 ** 30).toFixed(0)} GiB, Node ${process.version}; load average at start ${load.toFixed(2)}.
Date: ${started.toISOString()}.
Command: \`npx tsx benchmarks/calibrate.ts\`

A whole default calibration (budget 75 s, all four strategies) must take at most ${LIMIT_SECONDS} s on this 2-core machine.
Extra runs (second seed, second cache fraction, second reader speed) have their epochs capped by the time left;
"capped" counts the runs stopped that way, which are kept in the record but left out of the fit.

| plan | seconds | ≤ ${LIMIT_SECONDS} s | runs | capped |
| --- | ---: | :---: | --- | ---: |
${lines.join('\n')}

## Estimate at the calibration's own size against real runs (wall time)

Plan: the example plan at 16 000 rows × 20 nonzeros, 50 000 features, 300 MB/s disk; calibrated with a 40 s
budget (${smallRec.durationSeconds.toFixed(1)} s), then each strategy run for real three times on fresh data (seeds 3–5)
under the budget and throttle of its calibration run at that size. Target: the p50 within 25 % of the median real run.

| strategy | predicted s p10 / p50 / p90 | real runs s | error of p50 against the median | ≤ 25 % |
| --- | --- | --- | ---: | :---: |
${atSize.join('\n')}
`;
writeFileSync(args.out!, report);
console.log(`wrote ${args.out}`);
