/**
 * Synthetic calibration records with known laws, so model tests run without the engine.
 * `twisted` adds slopes of the wrong sign (as noise can produce) that the fit must bound.
 */
import type { CalibrationRecord, CalibrationRun } from '../../../src/lib/engine/calibrate/record.js';
import type { StrategyName } from '../../../src/lib/engine/types.js';
import { binaryBytes } from '../../../src/lib/engine/model/sizes.js';
import { aPlan } from './plan-factory.js';

const K = 40;
const NS = 200 + 40 * K; // kernel ns per update at k = 40 (a + b·k below)

function run(strategy: StrategyName, rows: number, seed: number, f: number, r: number, twisted: boolean, overhead: number): CalibrationRun {
	const ln = Math.log(rows) / Math.log(4000);
	const jitter = seed === 1 ? 1 : 1.05;
	const sign = twisted ? -1 : 1;
	let passes = 1;
	let upr = 20 * ln ** 2;
	let miss = 0.05;
	if (strategy === 'block') {
		passes = 10 * f ** -0.7 * ln ** (2 * sign);
		upr = 3 * passes;
		miss = 0.4;
	} else if (strategy === 'selective') {
		passes = 5 * f ** (-0.5 * sign) * ln;
		upr = 4 * passes * f ** (0.3 * sign);
		miss = 0.25;
	} else if (strategy === 'stream') {
		passes = 8 * f ** -0.5 * r ** (-0.5 * sign) * ln;
		upr = 10 * passes * r ** (0.3 * sign);
		miss = 0.1;
	}
	passes *= jitter;
	const bytesOnDisk = binaryBytes(rows, K, 'real');
	const diskMBps = 100;
	const readSeconds = (passes * bytesOnDisk * overhead) / (diskMBps * 1e6);
	const updates = upr * rows;
	const computeSeconds = updates * NS * 1e-9 * 2;
	const overlap = strategy === 'stream' ? 0.9 : 0;
	return {
		strategy,
		rows,
		seed,
		memoryBytes: strategy === 'memory' ? null : 1e6,
		diskMBps,
		cacheFraction: f,
		blocks: 1,
		updatesPerRead: r,
		bytesOnDisk,
		epochs: upr,
		passes,
		updates,
		cacheHitRate: 1 - miss,
		readSeconds,
		computeSeconds,
		wallSeconds: 0.1 + readSeconds + computeSeconds - overlap * Math.min(readSeconds, computeSeconds),
		peakMemoryBytes: 1e6,
		outerIterations: strategy === 'block' || strategy === 'selective' ? passes - 1 : 0,
		gap: 0.009,
		referenceNs: 400
	};
}

/** `throttleOverhead`: measured read time over bytes ÷ throttle (default 1.05) */
export function aRecord(opts: { twisted?: boolean; features?: number; throttleOverhead?: number; footprint?: boolean } = {}): CalibrationRecord {
	const twisted = opts.twisted ?? false;
	const oh = opts.throttleOverhead ?? 1.05;
	const runs: CalibrationRun[] = [];
	for (const rows of [1000, 2000, 4000, 8000]) for (const seed of [1, 2]) runs.push(run('memory', rows, seed, 1, 0.5, twisted, oh));
	for (const s of ['block', 'selective', 'stream'] as const)
		for (const rows of [2000, 4000])
			for (const f of [0.2, 0.4]) for (const r of s === 'stream' ? [0.5, 2] : [0.5]) for (const seed of [1, 2]) runs.push(run(s, rows, seed, f, r, twisted, oh));
	const features = opts.features ?? 1_000_000;
	return {
		kind: 'loadline-calibration',
		version: 1,
		machine: { cpuModel: 'test core', cores: 2, ramBytes: 24 * 2 ** 30, node: 'v20', platform: 'linux x64', date: '2026-01-01T00:00:00.000Z', coreSpeed: 1, referenceNs: 400 },
		plan: aPlan({ dataset: { features, nnzPerRow: K } }),
		features,
		seeds: [1, 2],
		durationSeconds: 60,
		kernel: [
			...[20, 40, 80].map((k) => ({ nnzPerRow: k, features, nsPerUpdate: 200 + 40 * k, rowBytes: 4 * 2 ** 20 })),
			// rows beyond the CPU caches: +1000 ns per update at 32 MiB, +2000 ns at 128 MiB
			...(opts.footprint ? [1000, 2000].map((extra, i) => ({ nnzPerRow: K, features, nsPerUpdate: NS + extra, rowBytes: [32, 128][i] * 2 ** 20 })) : [])
		],
		decode: { binaryMBps: 2000, textMBps: 300, gunzipMBps: 400 },
		runs,
		notes: []
	};
}
