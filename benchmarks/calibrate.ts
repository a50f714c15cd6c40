/**
 * Wall time of a whole default calibration (all four strategies, default budget), which must stay
 * under 90 s on the 2-core machine the product runs on, for plans of different shapes: the
 * example plan, a plan whose weights fill 128 MiB, a logistic plan on a small machine (cache
 * fractions below one: block and selective split the data), and a slow-disk text plan.
 *
 * Run: npx tsx benchmarks/calibrate.ts [--out benchmarks/results/calibrate.md]
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { cpus, loadavg, totalmem } from 'node:os';
import { parseArgs } from 'node:util';
import type { Plan } from '../src/lib/schemas/plan.js';
import { planSchema } from '../src/lib/schemas/plan.js';
import { calibrate } from '../src/lib/engine/calibrate/run.js';

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
`;
writeFileSync(args.out!, report);
console.log(`wrote ${args.out}`);
