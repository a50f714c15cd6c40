/**
 * Does a small calibration set converge like the full dataset? For a few invented shapes, the
 * epochs dual coordinate descent needs to reach tol (memory strategy, so reading plays no part)
 * on the full set (n rows, d features), on n/8 rows at the same d (a row sample of the full set),
 * and on n/8 rows at d/8 (the full set's rows per feature, so each feature occurs as often and
 * each row shares features with as many others). Calibration data follows the one that matches.
 *
 * Run: npx tsx benchmarks/rows-per-feature.ts [--seeds 21,22] [--shrink 8]
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { train } from '../src/lib/engine/solver/train.js';
import { endQuietlyOnClosedPipe } from './report.js';
import { writeShape, type DataShape } from './shapes.js';

const { values: a } = parseArgs({ options: { seeds: { type: 'string', default: '21,22' }, shrink: { type: 'string', default: '8' } } });
const seeds = a.seeds.split(',').map(Number);
const shrink = Number(a.shrink);

interface Shape extends DataShape {
	name: string;
}
// invented shapes spanning rows per feature from 0.25 to 2 and the three losses
const shapes: Shape[] = [
	{ name: 'A', rows: 160_000, features: 320_000, k: 30, p: 0.4, values: 'real', loss: 'hinge', C: 4 },
	{ name: 'B', rows: 120_000, features: 60_000, k: 50, p: 0.2, values: 'binary', loss: 'sqhinge', C: 1 },
	{ name: 'C', rows: 100_000, features: 400_000, k: 80, p: 0.5, values: 'real', loss: 'logistic', C: 2 },
	{ name: 'D', rows: 200_000, features: 100_000, k: 20, p: 0.3, values: 'real', loss: 'hinge', C: 0.5 }
];

endQuietlyOnClosedPipe();
const dir = mkdtempSync(join(tmpdir(), 'loadline-rpf-'));
const epochs = async (s: Shape, rows: number, features: number, seed: number) => {
	const path = join(dir, `${s.name}-${rows}-${features}-${seed}.bin`);
	await writeShape(s, path, seed, { rows, features });
	const r = await train({ data: path, loss: s.loss, C: s.C, tol: 0.01, strategy: 'memory', seed: 1 });
	rmSync(path, { force: true });
	return r.epochs;
};
console.log(`date ${new Date().toISOString()}; memory strategy, tol 0.01, data seeds ${seeds.join(', ')}, sets shrunk ${shrink}×`);
console.log('| shape | rows × features, k, loss, C | full set | n/8 rows, same d | n/8 rows, d/8 |');
console.log('|---|---|---|---|---|');
try {
	for (const s of shapes) {
		const cells: string[] = [];
		for (const [rows, features] of [
			[s.rows, s.features],
			[s.rows / shrink, s.features],
			[s.rows / shrink, s.features / shrink]
		]) {
			const es: number[] = [];
			for (const seed of seeds) es.push(await epochs(s, Math.round(rows), Math.round(features), seed));
			cells.push(es.map((e) => e.toFixed(0)).join(', '));
		}
		console.log(`| ${s.name} | ${s.rows} × ${s.features}, ${s.k}, ${s.loss}, ${s.C} | ${cells.join(' | ')} |`);
	}
} finally {
	rmSync(dir, { recursive: true, force: true });
}
