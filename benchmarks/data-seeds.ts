/**
 * How much one job's passes and epochs move between datasets drawn from the same generator:
 * the same shape, budget and throttle, different data seeds (and two solver seeds each). A
 * calibration sees two data seeds; this shows how far a third may fall from them.
 *
 * Run: npx tsx benchmarks/data-seeds.ts [--strategy stream] [--rows 77120] [--features 100000] [--k 40] [--p 0.3]
 *      [--values real] [--loss hinge] [--C 1] [--fraction 0.3] [--disk 107] [--seeds 1,3,11,12] [--index-range N]
 * The defaults are validation job 10's shape at its calibration's top rung (benchmarks/validate.ts).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import type { Loss, StrategyName, ValueKind } from '../src/lib/engine/types.js';
import { train } from '../src/lib/engine/solver/train.js';
import { budgetForRows, rowsInRamBytes } from '../src/lib/engine/model/sizes.js';
import { writeShape, type DataShape } from './shapes.js';

const { values: a } = parseArgs({
	options: {
		strategy: { type: 'string', default: 'stream' },
		rows: { type: 'string', default: '77120' },
		features: { type: 'string', default: '100000' },
		k: { type: 'string', default: '40' },
		p: { type: 'string', default: '0.3' },
		values: { type: 'string', default: 'real' },
		loss: { type: 'string', default: 'hinge' },
		C: { type: 'string', default: '1' },
		fraction: { type: 'string', default: '0.3' },
		disk: { type: 'string', default: '107' },
		seeds: { type: 'string', default: '1,3,11,12' },
		'index-range': { type: 'string' }
	}
});
const strategy = a.strategy as StrategyName;
const shape: DataShape = { rows: Number(a.rows), features: Number(a.features), k: Number(a.k), p: Number(a.p), values: a.values as ValueKind, loss: a.loss as Loss, C: Number(a.C) };
const { rows, features, k, values, loss } = shape;
// the same rows with their features spread over more indices, as calibration sets draw them
const indexRange = a['index-range'] === undefined ? features : Number(a['index-range']);
const budget = strategy === 'memory' ? undefined : budgetForRows(strategy, rows, indexRange, loss === 'logistic', Number(a.fraction) * rowsInRamBytes(rows, k, values));
const dir = mkdtempSync(join(tmpdir(), 'loadline-seeds-'));
const lines = ['| data seed | solver seed | epochs | passes | wall s |', '|---:|---:|---:|---:|---:|'];
try {
	for (const seed of a.seeds.split(',').map(Number)) {
		const path = join(dir, `rows-${seed}.bin`);
		await writeShape(shape, path, seed, { indexRange });
		for (const solverSeed of [1, 2]) {
			const r = await train({ data: path, loss, C: shape.C, tol: 0.01, strategy, seed: solverSeed, memoryBytes: budget, diskMBps: Number(a.disk) });
			lines.push(`| ${seed} | ${solverSeed} | ${r.epochs.toFixed(1)} | ${r.passes} | ${r.wallSeconds.toFixed(2)} |`);
		}
	}
} finally {
	rmSync(dir, { recursive: true, force: true });
}
console.log(`${strategy}, ${rows} rows × ${k} nonzeros, d = ${features}${indexRange !== features ? ` spread over ${indexRange} indices` : ''}, ${values}, ${loss}, C = ${a.C}, budget ${budget ?? 'unlimited'} bytes (${a.fraction} of the rows), ${a.disk} MB/s; date ${new Date().toISOString()}`);
console.log(lines.join('\n'));
