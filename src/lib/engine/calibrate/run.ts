/**
 * Calibration: run the real engine on small synthetic data shaped like the plan's dataset
 * (same k, p, value kind, loss, C, tol, and the plan's rows per feature, spread over the plan's
 * own weight vector) under the memory budget and reader throttle that reproduce the target
 * machine's cache fraction and trainer-to-reader speed ratio, and record what the model needs.
 *
 * Per strategy: a pilot run sizes the rest to the time budget; then runs at a larger row
 * count, a second seed (the spread), a second cache fraction (the RAM slope) and, for stream,
 * a second reader speed (the disk slope).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { cpus, platform, tmpdir, totalmem } from 'node:os';
import { join } from 'node:path';
import type { Plan } from '../../schemas/plan.js';
import type { StrategyName } from '../types.js';
import { generateToFile, GENERATE_DEFAULTS } from '../data/generate.js';
import { train } from '../solver/train.js';
import { DEFAULT_MAX_EPOCHS } from '../solver/options.js';
import { budgetShape, binaryBytesPerRow, updatesPerRead } from '../model/ratios.js';
import { budgetForRows, cachedRowsBytes, engineStateBytes } from '../model/sizes.js';
import { fitKernelLines, kernelNs } from '../model/fit.js';
import { measureCoreSpeed, measureKernel, REFERENCE_NS_PER_UPDATE } from './kernel.js';
import { measureDecode } from './measure.js';
import { openSample, type SampleInput } from './sample.js';
import { STRATEGIES, type CalibrationRecord, type CalibrationRun, type KernelPoint } from './record.js';

export interface CalibrationProgress {
	phase: 'machine' | 'kernel' | 'decode' | StrategyName | 'done';
	/** 0..1 of the whole calibration (time-based estimate) */
	fraction: number;
	message: string;
}

export interface CalibrateOptions {
	/** seeds of the synthetic data and solver; two give the spread. Default [1, 2] */
	seeds?: number[];
	/** time budget for the whole calibration in seconds; default 75 (the run stays under 90) */
	budgetSeconds?: number;
	/** strategies to calibrate; default all four */
	strategies?: StrategyName[];
	/** largest feature dimension the synthetic data may use; default 2^24 (128 MiB of weights) */
	maxFeatures?: number;
	/** largest rows of one calibration run; default 200 000 */
	maxRows?: number;
	/** the target engine's memory budget (a chosen cache size) instead of the plan's usable RAM; default none */
	memoryBytes?: number;
	/** folder for the synthetic files; default a fresh folder under the OS temp dir, removed at the end */
	workDir?: string;
	/** run on rows of this real sample (binary rows) instead of synthetic ones; its shape replaces the plan's dataset shape and caps the rows (calibrate/sample.ts); default none */
	sample?: SampleInput;
	onProgress?: (p: CalibrationProgress) => void;
}

/** share of the budget per strategy (block minimization converges slowest) */
const WEIGHTS: Record<StrategyName, number> = { memory: 0.12, block: 0.33, selective: 0.25, stream: 0.3 };
/** smallest cache fraction calibrated directly (at most 16 blocks); smaller ones are extrapolated */
const MIN_FRACTION = 1 / 16;
/** budget bytes each strategy needs beyond its state to run at all (engine minimums with headroom) */
const MIN_BUDGET: Record<StrategyName, number> = { memory: 0, block: 96 * 1024, selective: 384 * 1024, stream: 256 * 1024 };
const MIN_ROWS = 1000;
/** fewest features a calibration set gets however many rows per feature the plan has (rows stay sparse) */
const MIN_RUN_FEATURES_PER_NNZ = 4;
const MIN_RUN_FEATURES = 1000;
/** budget over the rows' bytes when the target holds all of them */
const FULL_HEADROOM = 1.05;

/** rungs shorter than this are mostly fixed costs (start-up, files): their ratios say nothing of growth (chosen, not measured) */
const MIN_GROWTH_SECONDS = 0.25;

/**
 * Expected wall-time ratio of the ladder's next doubling: the last one's, at least 2, and raised by
 * how much it rose over the one before (a run whose epochs climb with rows costs more per doubling
 * at every rung), at most twofold.
 */
export function nextGrowth(walls: number[]): number {
	const n = walls.length;
	if (n < 2) return 2.5;
	const step = walls[n - 1] / Math.max(1e-3, walls[n - 2]);
	const rise = n >= 3 && walls[n - 3] >= MIN_GROWTH_SECONDS ? Math.min(2, Math.max(1, step / (walls[n - 2] / walls[n - 3]))) : 1;
	return Math.max(2, step * rise);
}

function median(xs: number[]): number {
	const s = [...xs].sort((a, b) => a - b);
	const m = s.length >> 1;
	return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

export async function calibrate(plan: Plan, opts: CalibrateOptions = {}): Promise<CalibrationRecord> {
	const sample = opts.sample ? await openSample(opts.sample, opts.maxFeatures) : null;
	if (sample) plan = sample.shape(plan);
	const t0 = performance.now();
	const elapsed = () => (performance.now() - t0) / 1000;
	const budgetSeconds = opts.budgetSeconds ?? 75;
	const seeds = opts.seeds ?? [1, 2];
	const strategies = opts.strategies ?? [...STRATEGIES];
	const maxRows = Math.min(opts.maxRows ?? 200_000, sample?.rows ?? Infinity);
	const ds = plan.dataset;
	const tr = plan.training;
	const features = Math.min(ds.features, opts.maxFeatures ?? 2 ** 24);
	const k = Math.min(ds.nnzPerRow, features);
	const notes: string[] = [];
	if (features < ds.features) notes.push(`synthetic data used ${features} features instead of ${ds.features} (weights capped at ${(features * 8) / 2 ** 20} MiB)`);
	if (sample) notes.push(...sample.notes(Math.min(ds.rows, opts.maxRows ?? 200_000)));
	const progress = (phase: CalibrationProgress['phase'], message: string) =>
		opts.onProgress?.({ phase, fraction: phase === 'done' ? 1 : Math.min(0.99, elapsed() / budgetSeconds), message });
	const owned = opts.workDir === undefined;
	const dir = opts.workDir ?? mkdtempSync(join(tmpdir(), 'loadline-calibration-'));
	try {
		progress('machine', 'measuring relative core speed');
		const references: number[] = [];
		const reference = () => {
			const r = median([0, 1, 2].map(() => measureCoreSpeed(0.03).nsPerUpdate));
			references.push(r);
			return r;
		};
		const kernelReference = reference();

		progress('kernel', 'measuring cost per coordinate update');
		const kernel: KernelPoint[] = [];
		const ks = [...new Set([Math.max(1, Math.round(k / 2)), Math.round(k), Math.min(features, Math.round(k * 2))])];
		const dims = [...new Set([features, ...(features / 16 >= 1024 ? [Math.round(features / 16)] : [])])];
		const real = ds.valueKind === 'real';
		// synthetic sets keep the plan's rows per feature: n/8 rows of a dataset with d/8 features converge in about
		// the epochs the whole dataset needs, n/8 rows at d in far fewer (benchmarks/results/rows-per-feature.md).
		// Those features are spread over all d indices, so the weight vector keeps the plan's footprint.
		const runFeatures = (rows: number) =>
			sample ? features : Math.min(features, Math.max(MIN_RUN_FEATURES, MIN_RUN_FEATURES_PER_NNZ * k, Math.round((ds.features * rows) / ds.rows)));
		// rounds over every (d, k) and the median of each, so a change in the machine's load while they are measured
		// touches them all alike
		const rounds = [0, 1, 2].map(() => dims.flatMap((d) => ks.map((kk) => measureKernel(kk, d, { real, seconds: 0.02, visit: true }))));
		kernel.push(...rounds[0].map((p, i) => ({ ...p, nsPerUpdate: median(rounds.map((r) => r[i].nsPerUpdate)) })));
		const kernelFit = fitKernelLines(kernel);
		// the same step over row sets beyond the CPU caches: rows of a large dataset sit further out in the memory hierarchy
		for (const rowBytes of [32 << 20, 128 << 20]) kernel.push(measureKernel(k, features, { real, seconds: 0.06, rowBytes, visit: true }));
		const nsCal = kernelNs(kernelFit, k, features);

		const files = new Map<string, string>();
		const dataFile = async (rows: number, seed: number, format: 'bin' | 'svm' = 'bin') => {
			const key = `${rows}-${seed}-${format}`;
			let path = files.get(key);
			if (!path) {
				path = join(dir, `rows-${key}.${format}`);
				if (sample) await sample.write(rows, seed, seeds[0], path, format);
				else await generateToFile({ rows, features: runFeatures(rows), indexRange: features, nnz: k, positive: ds.positiveFraction, noise: GENERATE_DEFAULTS.noise, skew: GENERATE_DEFAULTS.skew, values: ds.valueKind, seed }, path, format);
				files.set(key, path);
			}
			return path;
		};

		progress('decode', 'measuring decode and parse throughput');
		// about 16 MB of rows: a smaller file measures the fixed cost of opening and allocating more than the decoding
		const decodeRows = Math.max(MIN_ROWS, Math.min(200_000, Math.round(16e6 / (k * 6 + 8))));
		const decode = await measureDecode(await dataFile(decodeRows, seeds[0]), await dataFile(decodeRows, seeds[0], 'svm'));

		// the target machine's ratios
		const coreSpeed = REFERENCE_NS_PER_UPDATE / kernelReference;
		const scale = coreSpeed / plan.machine.coreSpeed;
		const targetReadBps = Math.min(plan.machine.diskMBps * 1e6, (decode.binaryMBps * 1e6) / scale);
		// reader rate here that keeps the trainer-to-reader ratio: the target rate × (core speed here / there)
		const calReadBps = targetReadBps * scale;
		const decodeBps = decode.binaryMBps * 1e6;
		if (calReadBps >= decodeBps * 0.9) notes.push(`the target reads faster relative to its cores than this machine can decode; runs were unthrottled (updates per read extrapolated)`);
		const throttle = (bps: number) => (bps >= decodeBps * 0.9 ? undefined : bps / 1e6);

		const runs: CalibrationRun[] = [];
		let weightLeft = strategies.reduce((a, s) => a + WEIGHTS[s], 0);
		for (const s of strategies) {
			// each strategy gets its weight's share of what is left, so an overrun is made up by the next ones
			const share = (Math.max(0, budgetSeconds - elapsed()) * WEIGHTS[s]) / weightLeft;
			weightLeft -= WEIGHTS[s];
			const started = elapsed();
			const referenceNs = reference();
			const targetFraction = budgetShape(plan, s, ds.rows, opts.memoryBytes).cacheFraction;
			const f1 = s === 'memory' ? 1 : Math.min(1, Math.max(MIN_FRACTION, targetFraction));
			const f2 = s === 'memory' ? 1 : f1 < 1 ? Math.min(1, f1 * 2) : 0.5;
			const bytesPerRowRam = cachedRowsBytes(s, 1000, k, ds.valueKind) / 1000;
			// rows so that the smallest budget holds the engine's minimum
			const needRows = Math.ceil(MIN_BUDGET[s] / (Math.min(f1, f2) * bytesPerRowRam));
			const pilotRows = Math.min(ds.rows, maxRows, Math.max(MIN_ROWS, needRows));
			/** `maxEpochs`: a cap from the time left (extra runs); a run stopped by it is marked capped */
			const runOne = async (rows: number, seed: number, fraction: number, readBps: number, maxEpochs?: number): Promise<CalibrationRun> => {
				const data = await dataFile(rows, seed);
				const logistic = tr.loss === 'logistic';
				const rowsRam = cachedRowsBytes(s, rows, k, ds.valueKind);
				// a whole-data budget gets headroom: generated row lengths scatter around k, and a cache a few rows short re-reads the file
				const rowBytes = fraction >= 1 ? rowsRam * FULL_HEADROOM : fraction * rowsRam;
				const used = runFeatures(rows);
				const memoryBytes = s === 'memory' ? undefined : budgetForRows(s, rows, features, logistic, Math.max(rowBytes, MIN_BUDGET[s]));
				const state = engineStateBytes(s, rows, features, logistic, memoryBytes);
				const diskMBps = throttle(readBps);
				const rep = await train({ data, loss: tr.loss, C: tr.C, tol: tr.tol, strategy: s, seed, memoryBytes, diskMBps, ...(maxEpochs !== undefined ? { maxEpochs } : {}) });
				const capped = maxEpochs !== undefined && maxEpochs < DEFAULT_MAX_EPOCHS && rep.gap > tr.tol;
				const bytesOnDisk = binaryBytesPerRow(rows, k, ds.valueKind) * rows;
				const rate = Math.min(diskMBps ? diskMBps * 1e6 : Infinity, decodeBps);
				if (capped) notes.push(`${s} at ${rows} rows, cache fraction ${fraction.toPrecision(2)}: stopped after ${rep.epochs.toFixed(0)} epochs by the calibration's time budget (gap ${rep.gap.toPrecision(3)}); left out of the fit`);
				else if (rep.gap > tr.tol) notes.push(`${s} at ${rows} rows stopped at the epoch limit with gap ${rep.gap.toPrecision(3)} above tol`);
				const run: CalibrationRun = {
					strategy: s,
					rows,
					...(used !== features ? { featuresUsed: used } : {}),
					seed,
					memoryBytes: memoryBytes ?? null,
					diskMBps: diskMBps ?? null,
					cacheFraction: s === 'memory' ? 1 : Math.min(1, (memoryBytes! - state) / rowsRam),
					blocks: s === 'block' || s === 'selective' ? Math.max(1, Math.ceil(1 / Math.min(1, (memoryBytes! - state) / rowsRam))) : 1,
					updatesPerRead: updatesPerRead(bytesOnDisk / rows, rate, nsCal * 1e-9),
					bytesOnDisk,
					epochs: rep.epochs,
					passes: rep.passes,
					updates: rep.updates,
					cacheHitRate: rep.cacheHitRate,
					readSeconds: rep.readSeconds,
					computeSeconds: rep.computeSeconds,
					wallSeconds: rep.wallSeconds,
					peakMemoryBytes: rep.peakMemoryBytes,
					outerIterations: rep.outerIterations,
					gap: rep.gap,
					...(capped ? { capped } : {}),
					referenceNs,
					// at most 40 (seconds, gap) points: enough for the convergence chart, small in the record
					trace: rep.trace.filter((_, i, all) => all.length <= 40 || i % Math.ceil(all.length / 40) === 0 || i === all.length - 1)
				};
				runs.push(run);
				progress(s, `${s}: ${rows} rows, cache fraction ${run.cacheFraction.toFixed(3)}, ${rep.passes} passes, ${rep.wallSeconds.toFixed(2)} s`);
				return run;
			};
			// a ladder of doubling row counts at the target's ratios while the next rung fits the share, keeping
			// room for the extra runs: the second seed at the new top (the curves weigh the top rung most, and one
			// stray draw there would carry the extrapolation alone), stream's second reader speed one rung below
			// it, and the second cache fraction on the smallest rung
			const ladder: CalibrationRun[] = [];
			let rows = pilotRows;
			try {
				while (true) {
					ladder.push(await runOne(rows, seeds[0], f1, calReadBps));
					const last = ladder[ladder.length - 1].wallSeconds;
					const growth = nextGrowth(ladder.map((r) => r.wallSeconds));
					const next = Math.min(ds.rows, maxRows, rows * 2);
					const spent = elapsed() - started;
					// growth is per doubling; the last rung may be a partial step up to the plan's rows
					const nextCost = last * growth ** Math.log2(next / rows);
					const extras = nextCost + (s === 'stream' ? last : 0) + (s === 'memory' ? 0 : ladder[0].wallSeconds);
					if (next <= rows || spent + nextCost + extras > share) break;
					rows = next;
				}
			} catch (err) {
				notes.push(`${s}: not calibrated at ${rows} rows (${err instanceof Error ? err.message : String(err)})`);
				if (ladder.length === 0) continue;
			}
			const top = ladder[ladder.length - 1];
			const below = ladder.length >= 2 ? ladder[ladder.length - 2] : top;
			const seed2 = seeds[1] ?? seeds[0] + 1;
			const left = () => share - (elapsed() - started);
			const fits = (rung: CalibrationRun, margin = 1.5) => rung.wallSeconds * margin <= left();
			// an extra run at other settings may converge far slower than the rung it copies (block minimization
			// with twice the blocks): its epochs are capped by the share left, at the rate the rung ran
			const epochCap = (rung: CalibrationRun) => {
				const perEpoch = rung.wallSeconds / Math.max(1, rung.epochs);
				return Math.max(5, Math.min(DEFAULT_MAX_EPOCHS, Math.floor(left() / Math.max(1e-6, perEpoch))));
			};
			// the second cache fraction on the smallest rung: its cost is the least predictable
			if (s !== 'memory' && fits(ladder[0])) await runOne(ladder[0].rows, seeds[0], f2, calReadBps, epochCap(ladder[0]));
			if (s === 'stream' && fits(below)) {
				// a second trainer-to-reader ratio: a 4× faster reader when the throttle allows, else half speed
				const faster = calReadBps * 4 < decodeBps * 0.9;
				await runOne(below.rows, seeds[0], f1, faster ? calReadBps * 4 : calReadBps / 2, epochCap(below));
			}
			// the second seed at the top rung, which the ladder kept room for; one rung below when the top took
			// longer than the ladder expected
			const seedAt = fits(top, 1) ? top : fits(below) ? below : null;
			if (seedAt) await runOne(seedAt.rows, seed2, f1, calReadBps, epochCap(seedAt));
		}
		// other load on the machine moves single measurements: state everything at the median load
		const typical = median(references);
		const toTypical = typical / kernelReference;
		const cpu = cpus();
		const record: CalibrationRecord = {
			kind: 'loadline-calibration',
			version: 1,
			machine: {
				cpuModel: cpu[0]?.model?.trim() ?? 'unknown',
				cores: cpu.length,
				ramBytes: totalmem(),
				node: process.version,
				platform: `${platform()} ${process.arch}`,
				date: new Date().toISOString(),
				coreSpeed: REFERENCE_NS_PER_UPDATE / typical,
				referenceNs: typical
			},
			plan,
			features,
			seeds,
			durationSeconds: elapsed(),
			kernel: kernel.map((p) => ({ ...p, nsPerUpdate: p.nsPerUpdate * toTypical })),
			decode: { binaryMBps: decode.binaryMBps / toTypical, textMBps: decode.textMBps / toTypical, gunzipMBps: decode.gunzipMBps / toTypical },
			runs,
			data: sample ? sample.data : { source: 'synthetic' },
			notes
		};
		progress('done', `calibrated in ${elapsed().toFixed(1)} s`);
		return record;
	} finally {
		if (owned) rmSync(dir, { recursive: true, force: true });
	}
}
