/**
 * Validation of the capacity model: real training runs at full size under emulated RAM and disk
 * limits, against the estimate made from a calibration alone (the calibration never sees the job's
 * own data or its full row count), and against a naive baseline: bytes ÷ disk speed × a fixed pass count.
 *
 * Run: npx tsx benchmarks/validate.ts [--jobs 1,2,…] [--scale 1] [--calibration-seconds 30] [--out benchmarks/results/validate.md] [--records DIR] [--reals-from DIR]
 * --records keeps each job's calibration record and real-run reports as JSON in DIR, so a model change can be
 * re-scored on the same calibrations (benchmarks/rescore.ts) before the suite is run again.
 * --reals-from takes the real runs from such a folder instead of running them again: for a change to the
 * calibration alone, which needs fresh calibrations but leaves the engine's real runs as they were.
 * --scale multiplies every job's rows (e.g. 0.5 for a reduced suite). Data goes to benchmarks/data/ (git-ignored).
 * Prints and writes a markdown report with machine, date, command, the table and the error summary.
 */
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { cpus, loadavg, totalmem } from 'node:os';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import type { StrategyName, TrainReport } from '../src/lib/engine/types.js';
import type { Plan } from '../src/lib/schemas/plan.js';
import { train } from '../src/lib/engine/solver/train.js';
import { calibrate } from '../src/lib/engine/calibrate/run.js';
import { measureCoreSpeed } from '../src/lib/engine/calibrate/kernel.js';
import { predict } from '../src/lib/engine/model/predict.js';
import { binaryBytes, rowsInRamBytes } from '../src/lib/engine/model/sizes.js';
import { budgetForRows } from '../src/lib/engine/model/sizes.js';
import { median } from './report.js';
import { writeShape, type DataShape } from './shapes.js';

/** the baseline's fixed pass count, chosen before any job ran (common practice, no source) */
const BASELINE_PASSES = 10;

interface Job extends DataShape {
	id: number;
	strategy: StrategyName;
	/** share of the rows the memory budget holds (ignored by memory) */
	fraction: number;
	diskMBps: number;
}

// sizes: every job runs for several seconds at least, so a run's fixed start-up (threads, block files) is a
// small part of it, and the whole suite stays near 30 minutes on this 2-core machine
const JOBS: Job[] = [
	{ id: 1, strategy: 'memory', rows: 200_000, features: 100_000, k: 40, p: 0.3, values: 'real', loss: 'hinge', C: 1, fraction: 1, diskMBps: 500 },
	{ id: 2, strategy: 'memory', rows: 100_000, features: 500_000, k: 100, p: 0.5, values: 'binary', loss: 'logistic', C: 0.5, fraction: 1, diskMBps: 200 },
	{ id: 3, strategy: 'memory', rows: 300_000, features: 50_000, k: 20, p: 0.2, values: 'real', loss: 'sqhinge', C: 2, fraction: 1, diskMBps: 1000 },
	{ id: 4, strategy: 'block', rows: 40_000, features: 100_000, k: 40, p: 0.3, values: 'real', loss: 'hinge', C: 1, fraction: 0.4, diskMBps: 200 },
	{ id: 5, strategy: 'block', rows: 150_000, features: 50_000, k: 20, p: 0.5, values: 'binary', loss: 'sqhinge', C: 0.5, fraction: 0.25, diskMBps: 500 },
	{ id: 6, strategy: 'block', rows: 250_000, features: 200_000, k: 30, p: 0.4, values: 'real', loss: 'logistic', C: 1, fraction: 0.5, diskMBps: 400 },
	{ id: 7, strategy: 'selective', rows: 100_000, features: 100_000, k: 40, p: 0.3, values: 'real', loss: 'hinge', C: 1, fraction: 0.3, diskMBps: 200 },
	{ id: 8, strategy: 'selective', rows: 200_000, features: 300_000, k: 80, p: 0.5, values: 'binary', loss: 'logistic', C: 1, fraction: 0.5, diskMBps: 100 },
	{ id: 9, strategy: 'selective', rows: 150_000, features: 50_000, k: 20, p: 0.2, values: 'real', loss: 'sqhinge', C: 4, fraction: 0.2, diskMBps: 300 },
	{ id: 10, strategy: 'stream', rows: 100_000, features: 100_000, k: 40, p: 0.3, values: 'real', loss: 'hinge', C: 1, fraction: 0.3, diskMBps: 100 },
	{ id: 11, strategy: 'stream', rows: 200_000, features: 1_000_000, k: 20, p: 0.5, values: 'binary', loss: 'sqhinge', C: 1, fraction: 0.5, diskMBps: 300 },
	{ id: 12, strategy: 'stream', rows: 200_000, features: 100_000, k: 60, p: 0.4, values: 'real', loss: 'logistic', C: 0.5, fraction: 0.25, diskMBps: 50 },
	{ id: 13, strategy: 'stream', rows: 150_000, features: 200_000, k: 40, p: 0.3, values: 'real', loss: 'hinge', C: 10, fraction: 0.2, diskMBps: 200 }
];

const { values: flags } = parseArgs({
	options: {
		jobs: { type: 'string' },
		scale: { type: 'string', default: '1' },
		'calibration-seconds': { type: 'string', default: '30' },
		out: { type: 'string', default: 'benchmarks/results/validate.md' },
		records: { type: 'string' },
		'reals-from': { type: 'string' }
	}
});
const scale = Number(flags.scale);
const calSeconds = Number(flags['calibration-seconds']);
const pick = flags.jobs ? new Set(flags.jobs.split(',').map(Number)) : null;
const jobs = JOBS.filter((j) => !pick || pick.has(j.id)).map((j) => ({ ...j, rows: Math.max(2000, Math.round(j.rows * scale)) }));
const dataDir = 'benchmarks/data/validate';
mkdirSync(dataDir, { recursive: true });

const rel = (pred: number, meas: number) => Math.abs(pred - meas) / meas;

interface Row {
	job: Job;
	budget: number | null;
	measured: { wall: number; passes: number; hit: number; gap: number; walls: number[]; epochs: number; compute: number; read: number };
	predicted: { p10: number; p50: number; p90: number; passes: number; hit: number; epochs: number; compute: number; read: number };
	baseline: number;
	calSeconds: number;
}

/** two real runs (solver seeds 1 and 2): their mean is the measured figure, their difference the noise floor */
async function realRuns(job: Job, budget: number | null): Promise<TrainReport[]> {
	const data = join(dataDir, `job${job.id}-${job.rows}.bin`);
	if (!existsSync(data))
		await writeShape(job, data, 1);
	const reals: TrainReport[] = [];
	for (const seed of [1, 2]) reals.push(await train({ data, loss: job.loss, C: job.C, tol: 0.01, strategy: job.strategy, seed, memoryBytes: budget ?? undefined, diskMBps: job.diskMBps }));
	return reals;
}

/** the real runs a validation kept with --records for the same job (traces were not kept) */
function keptReals(dir: string, job: Job): TrainReport[] {
	const saved = JSON.parse(readFileSync(join(dir, `job${job.id}.json`), 'utf8'));
	if (saved.job.rows !== job.rows) throw new Error(`${dir}/job${job.id}.json ran ${saved.job.rows} rows, this suite ${job.rows}`);
	return saved.reals.map((r: Omit<TrainReport, 'trace'>) => ({ ...r, trace: [] }));
}

const rows: Row[] = [];
const started = new Date();
const loadAtStart = loadavg()[0];
for (const job of jobs) {
	const logistic = job.loss === 'logistic';
	const rowsRam = rowsInRamBytes(job.rows, job.k, job.values);
	const budget = job.strategy === 'memory' ? null : budgetForRows(job.strategy, job.rows, job.features, logistic, job.fraction * rowsRam);
	// the plan is this machine (its core speed now) with the job's emulated disk; the budget is given as a chosen cache size
	const coreSpeed = measureCoreSpeed(0.2).coreSpeed;
	const plan: Plan = {
		dataset: { rows: job.rows, features: job.features, nnzPerRow: job.k, positiveFraction: job.p, valueKind: job.values, format: 'binary', compressed: false },
		machine: { ramGiB: 64, diskMBps: job.diskMBps, diskInterface: 'pcie5x4', cores: cpus().length, coreSpeed: Math.min(20, coreSpeed) },
		training: { loss: job.loss, C: job.C, tol: 0.01, cValues: 1, folds: 1 }
	};
	const cal = await calibrate(plan, { strategies: [job.strategy], budgetSeconds: calSeconds, memoryBytes: budget ?? undefined, seeds: [11, 12] });
	const here: Plan = { ...plan, machine: { ...plan.machine, coreSpeed: cal.machine.coreSpeed } };
	const est = predict(here, cal, { memoryBytes: budget ?? undefined }).strategies.find((e) => e.strategy === job.strategy);
	if (!est) {
		console.error(`job ${job.id} ${job.strategy}: not calibrated (${cal.notes.join('; ')})`);
		continue;
	}
	const reals = flags['reals-from'] ? keptReals(flags['reals-from'], job) : await realRuns(job, budget);
	const mean = (f: (r: (typeof reals)[number]) => number) => reals.reduce((a, r) => a + f(r), 0) / reals.length;
	const real = reals[0];
	const bytes = binaryBytes(job.rows, job.k, job.values);
	const row: Row = {
		job,
		budget,
		measured: { wall: mean((r) => r.wallSeconds), passes: mean((r) => r.passes), hit: mean((r) => r.cacheHitRate), gap: real.gap, walls: reals.map((r) => r.wallSeconds), epochs: mean((r) => r.epochs), compute: mean((r) => r.computeSeconds), read: mean((r) => r.readSeconds) },
		predicted: { p10: est.wallSeconds.p10, p50: est.wallSeconds.p50, p90: est.wallSeconds.p90, passes: est.passes.p50, hit: est.cacheHitRate, epochs: est.epochs, compute: est.breakdown.compute, read: est.breakdown.prepare + est.breakdown.read },
		baseline: ((bytes / (job.diskMBps * 1e6)) * BASELINE_PASSES),
		calSeconds: cal.durationSeconds
	};
	rows.push(row);
	if (flags.records) {
		mkdirSync(flags.records, { recursive: true });
		writeFileSync(join(flags.records, `job${job.id}.json`), JSON.stringify({ job, budget, plan: here, calibration: cal, reals: reals.map(({ trace: _, ...r }) => r), baseline: row.baseline }, null, 1));
	}
	console.error(
		`job ${job.id} ${job.strategy}: measured ${row.measured.walls.map((w) => w.toFixed(1)).join(' and ')} s, ${row.measured.passes} passes; predicted ${est.wallSeconds.p50.toFixed(1)} s, ${est.passes.p50.toFixed(1)} passes; baseline ${row.baseline.toFixed(1)} s`
	);
}

const f1 = (x: number) => x.toFixed(1);
const pct = (x: number) => `${(x * 100).toFixed(0)} %`;
const table = [
	'| job | strategy | rows | k | d | values | loss | C | budget (share of rows) | disk MB/s | passes meas / pred | hit rate meas / pred | wall s meas | wall s pred p10 / p50 / p90 | error | baseline s | baseline error |',
	'|---|---|---|---|---|---|---|---|---|---|---|---|---|---|---|---|---|',
	...rows.map((r) => {
		const j = r.job;
		return `| ${j.id} | ${j.strategy} | ${j.rows} | ${j.k} | ${j.features} | ${j.values} | ${j.loss} | ${j.C} | ${r.budget === null ? 'unlimited' : `${(r.budget / 2 ** 20).toFixed(1)} MiB (${j.fraction})`} | ${j.diskMBps} | ${f1(r.measured.passes)} / ${f1(r.predicted.passes)} | ${r.measured.hit.toFixed(3)} / ${r.predicted.hit.toFixed(3)} | ${f1(r.measured.wall)} | ${f1(r.predicted.p10)} / ${f1(r.predicted.p50)} / ${f1(r.predicted.p90)} | ${pct(rel(r.predicted.p50, r.measured.wall))} | ${f1(r.baseline)} | ${pct(rel(r.baseline, r.measured.wall))} |`;
	})
];
// where the time goes: measured (mean of the two runs) against the estimate's breakdown
const detail = [
	'| job | strategy | wall s, run 1 / run 2 | epochs meas / pred | read s meas / pred | compute s meas / pred |',
	'|---|---|---|---|---|---|',
	...rows.map((r) => `| ${r.job.id} | ${r.job.strategy} | ${r.measured.walls.map(f1).join(' / ')} | ${f1(r.measured.epochs)} / ${f1(r.predicted.epochs)} | ${f1(r.measured.read)} / ${f1(r.predicted.read)} | ${f1(r.measured.compute)} / ${f1(r.predicted.compute)} |`)
];
const noise = rows.map((r) => Math.abs(r.measured.walls[0] - r.measured.walls[1]) / r.measured.wall);
const errs = rows.map((r) => rel(r.predicted.p50, r.measured.wall));
const base = rows.map((r) => rel(r.baseline, r.measured.wall));
const passesOk = rows.filter((r) => Math.abs(r.predicted.passes - r.measured.passes) <= Math.max(1, 0.2 * r.measured.passes)).length;
const inRange = rows.filter((r) => r.measured.wall >= r.predicted.p10 && r.measured.wall <= r.predicted.p90).length;
const summary = [
	`- wall-time error of the model: median ${pct(median(errs))}, worst ${pct(Math.max(...errs))} (targets: median ≤ 15 %, worst ≤ 40 %)`,
	`- naive baseline (bytes ÷ disk speed × ${BASELINE_PASSES} passes): median ${pct(median(base))}, worst ${pct(Math.max(...base))}; model median / baseline median = ${(median(errs) / median(base)).toFixed(2)} (target ≤ 0.33)`,
	`- passes within 1 or 20 % (whichever is larger): ${passesOk} of ${rows.length}`,
	`- measured wall inside the predicted p10–p90: ${inRange} of ${rows.length}`,
	`- noise floor: the two real runs of a job differ by a median ${pct(median(noise))} of their mean (worst ${pct(Math.max(...noise))})`
];
const cpu = cpus()[0]?.model?.trim() ?? 'unknown';
const report = [
	'# Validation: capacity model against measured jobs',
	'',
	`Machine: ${cpu}, ${cpus().length} cores, ${(totalmem() / 2 ** 30).toFixed(1)} GiB RAM, Node ${process.version}. Date: ${started.toISOString()}.`,
	`Load average (1 min) at start ${loadAtStart.toFixed(1)}, at end ${loadavg()[0].toFixed(1)} on ${cpus().length} cores: other work on the machine shares the CPU with these runs.`,
	`Command: \`npx tsx benchmarks/validate.ts${process.argv.slice(2).length ? ' ' + process.argv.slice(2).join(' ') : ''}\` (${((Date.now() - started.getTime()) / 60000).toFixed(1)} min; calibrations ${f1(rows.reduce((a, r) => a + r.calSeconds, 0))} s in total).`,
	'',
	'Each job: a calibration of its strategy alone (synthetic data, other seeds, at most the budget above per job), then the estimate for the full job, then two real runs with `train` at full size (solver seeds 1 and 2; their mean is the measured figure) under the same emulated budget and disk throttle.',
	'',
	...table,
	'',
	...summary,
	'',
	...detail,
	''
].join('\n');
console.log(report);
if (flags.out) writeFileSync(flags.out, report);
