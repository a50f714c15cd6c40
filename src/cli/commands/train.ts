/** `loadline train`: run one training strategy on a data file and report what it took. */
import { existsSync, mkdtempSync, openSync, readSync, closeSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { CliError, choiceFlag, numberFlag, parseFlags, type Command } from '../args.js';
import { train as runTraining, OptionError } from '../../lib/engine/solver/train.js';
import { LOSSES, STRATEGIES } from '../../lib/engine/solver/options.js';
import { BINARY_MAGIC, BinaryFormatError } from '../../lib/engine/data/binary.js';
import { convertSvmlightToBinary } from '../../lib/engine/data/convert.js';
import { TextRowError } from '../../lib/engine/data/svmlight.js';

const help = `loadline train --data FILE --loss LOSS --C c --strategy STRATEGY [options]

Train an L2-regularized linear classifier (no bias feature) by dual coordinate descent and
report objectives, passes over the file, cache hit rate, time and memory.

  --data FILE          Loadline binary rows (svmlight text rows are converted to a temporary binary file first)
  --loss LOSS          hinge | sqhinge | logistic
  --C c                regularization constant, > 0
  --strategy S         memory | block | selective | stream
  --memory-mb M        budget for blocks / cache in MiB (default: unlimited for memory, 256 for the others)
  --disk-mbps B        throttle reads to B MB/s to emulate a slower disk (default: unthrottled)
  --tol t              stop at relative duality gap (P − D)/P ≤ t (default 0.01)
  --max-epochs E       epoch limit (default 1000)
  --seed X             seed of the coordinate order (default 1)
  --compress           block: zlib-compress the block files
  --model OUT          write the weight vector as JSON
  --json               print one JSON object instead of a summary`;

function isBinaryRows(path: string): boolean {
	const fd = openSync(path, 'r');
	try {
		const head = Buffer.alloc(BINARY_MAGIC.length);
		readSync(fd, head, 0, head.length, 0);
		return head.toString('latin1') === BINARY_MAGIC;
	} finally {
		closeSync(fd);
	}
}

export const train: Command = {
	summary: 'train one strategy on a data file and report time, passes and memory',
	help,
	async run(argv) {
		const { values: f } = parseFlags(argv, {
			data: { type: 'string' },
			loss: { type: 'string' },
			C: { type: 'string' },
			strategy: { type: 'string' },
			'memory-mb': { type: 'string' },
			'disk-mbps': { type: 'string' },
			tol: { type: 'string' },
			'max-epochs': { type: 'string' },
			seed: { type: 'string' },
			compress: { type: 'boolean' },
			model: { type: 'string' },
			json: { type: 'boolean' }
		});
		if (!f.data) throw new CliError('--data is required');
		if (!existsSync(f.data)) throw new CliError(`--data: file "${f.data}" not found`);
		const loss = choiceFlag(f.loss, 'loss', LOSSES);
		const strategy = choiceFlag(f.strategy, 'strategy', STRATEGIES);
		const C = numberFlag(f.C, 'C', { min: Number.MIN_VALUE });
		const memoryMb = f['memory-mb'] === undefined ? undefined : numberFlag(f['memory-mb'], 'memory-mb', { min: Number.MIN_VALUE });
		const diskMBps = f['disk-mbps'] === undefined ? undefined : numberFlag(f['disk-mbps'], 'disk-mbps', { min: Number.MIN_VALUE });
		const tol = numberFlag(f.tol, 'tol', { default: 0.01, min: Number.MIN_VALUE });
		const maxEpochs = numberFlag(f['max-epochs'], 'max-epochs', { default: 1000, min: 1 });
		const seed = numberFlag(f.seed, 'seed', { default: 1, integer: true });

		let data = f.data;
		let scratch: string | null = null;
		try {
			if (!isBinaryRows(data)) {
				scratch = mkdtempSync(join(tmpdir(), 'loadline-train-'));
				const converted = join(scratch, 'rows.bin');
				try {
					await convertSvmlightToBinary(data, converted);
				} catch (err) {
					if (err instanceof TextRowError) throw new CliError(`--data: ${f.data} is neither binary rows nor valid svmlight text (${err.message}); check it or run \`loadline convert\``);
					throw err;
				}
				data = converted;
			}
			const report = await runTraining({
				data,
				loss,
				C,
				strategy,
				tol,
				maxEpochs,
				seed,
				memoryBytes: memoryMb === undefined ? undefined : Math.floor(memoryMb * 2 ** 20),
				diskMBps,
				compress: f.compress ?? false,
				keepWeights: f.model !== undefined
			});
			const { w, trace, ...fields } = report;
			if (f.model !== undefined && w) {
				writeFileSync(f.model, JSON.stringify({ format: 'loadline-linear-model', version: 1, loss, C, bias: false, d: w.length, w: Array.from(w) }) + '\n');
			}
			if (f.json) {
				console.log(JSON.stringify({ ...fields, trace }));
				return 0;
			}
			const mib = (b: number) => `${(b / 2 ** 20).toFixed(1)} MiB`;
			console.log(
				[
					`${strategy} ${loss} C=${C}: primal ${report.primal.toPrecision(8)}, dual ${report.dual.toPrecision(8)}, gap ${report.gap.toExponential(2)}${report.gap <= tol ? '' : ` (above tol ${tol}: epoch limit reached)`}`,
					`  ${report.epochs.toFixed(1)} epochs, ${report.updates} coordinate updates, ${report.passes} passes over the file, cache hit rate ${(100 * report.cacheHitRate).toFixed(1)} %`,
					`  ${report.wallSeconds.toFixed(2)} s wall (read ${report.readSeconds.toFixed(2)} s, compute ${report.computeSeconds.toFixed(2)} s), peak ${mib(report.peakMemoryBytes)} counted`,
					`  training accuracy ${(100 * report.accuracy).toFixed(2)} %${f.model ? `; model written to ${f.model}` : ''}`
				].join('\n')
			);
			return 0;
		} catch (err) {
			if (err instanceof OptionError) throw new CliError(err.message);
			if (err instanceof BinaryFormatError) throw new CliError(`--data: ${err.message}`);
			throw err;
		} finally {
			if (scratch) rmSync(scratch, { recursive: true, force: true });
		}
	}
};
