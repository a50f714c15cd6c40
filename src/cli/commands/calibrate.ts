/** `loadline calibrate`: run the engine on synthetic data shaped like a plan (or on a real sample) and write the calibration record. */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { CliError, numberFlag, parseFlags, type Command } from '../args.js';
import { calibrate as runCalibration, type CalibrationProgress } from '../../lib/engine/calibrate/run.js';
import { STRATEGIES } from '../../lib/engine/calibrate/record.js';
import { sampleFromFile, type SampleInput } from '../../lib/engine/calibrate/sample.js';
import type { StrategyName } from '../../lib/engine/types.js';
import { readPlan } from './plan-files.js';

const help = `loadline calibrate --plan PLAN.json --out CAL.json [options]

Run short training runs of the real engine on synthetic data shaped like the plan's dataset,
at the cache fraction and trainer-to-reader speed ratio the plan's machine implies, and write
what they measured as a calibration record (JSON) for \`loadline estimate\`.

  --plan FILE           plan (dataset, machine, training; the plan schema)
  --out FILE            where to write the calibration record
  --budget-seconds S    time budget of the whole calibration (default 75)
  --seeds A,B           seeds of the synthetic data and solver (default 1,2)
  --strategies LIST     comma-separated subset of memory,block,selective,stream (default all)
  --sample FILE         run on the rows of this real sample instead of synthetic data: Loadline
                        binary rows, or svmlight text rows (converted first). Its features,
                        nonzeros per row, positives and value kind replace the plan's; runs use
                        at most its rows, and the record says the data came from the sample`;

function bar(p: CalibrationProgress): string {
	const width = 30;
	const done = Math.round(p.fraction * width);
	return `\r[${'#'.repeat(done)}${'-'.repeat(width - done)}] ${(p.fraction * 100).toFixed(0).padStart(3)} % ${p.phase.padEnd(9)} ${p.message.slice(0, 60).padEnd(60)}`;
}

export const calibrate: Command = {
	summary: 'calibrate the capacity model for a plan (short engine runs)',
	help,
	async run(argv) {
		const { values: f } = parseFlags(argv, {
			plan: { type: 'string' },
			out: { type: 'string' },
			'budget-seconds': { type: 'string' },
			seeds: { type: 'string' },
			strategies: { type: 'string' },
			sample: { type: 'string' }
		});
		if (!f.plan) throw new CliError('--plan is required');
		if (!f.out) throw new CliError('--out is required');
		const plan = readPlan(f.plan);
		const budgetSeconds = numberFlag(f['budget-seconds'], 'budget-seconds', { default: 75, min: 5, max: 3600 });
		const seeds = f.seeds === undefined ? [1, 2] : f.seeds.split(',').map((s) => numberFlag(s.trim(), 'seeds', { integer: true }));
		const strategies = f.strategies === undefined ? undefined : f.strategies.split(',').map((s) => s.trim());
		for (const s of strategies ?? []) if (!(STRATEGIES as readonly string[]).includes(s)) throw new CliError(`--strategies: "${s}" is not one of ${STRATEGIES.join(', ')}`);
		if (f.sample === '') throw new CliError('--sample needs a file');
		const tty = process.stderr.isTTY === true;
		let lastPhase = '';
		const work = f.sample === undefined ? null : mkdtempSync(join(tmpdir(), 'loadline-sample-'));
		let record;
		try {
			let sample: SampleInput | undefined;
			if (f.sample !== undefined) {
				try {
					sample = await sampleFromFile(f.sample, work!);
				} catch (err) {
					throw new CliError(`--sample: ${f.sample}: ${(err as Error).message}`);
				}
			}
			const calibrating = runCalibration(plan, {
				budgetSeconds,
				seeds,
				strategies: strategies as StrategyName[] | undefined,
				sample,
				onProgress: (p) => {
					if (tty) process.stderr.write(bar(p));
					else if (p.phase !== lastPhase) process.stderr.write(`calibrate: ${p.phase}\n`);
					lastPhase = p.phase;
				}
			});
			// the sample's own problems (one label only, too many features) come back naming the field
			record = await calibrating.catch((err: Error) => {
				throw sample && err.message.startsWith('sample') ? new CliError(`--sample: ${f.sample}: ${err.message}`) : err;
			});
		} finally {
			if (work) rmSync(work, { recursive: true, force: true });
		}
		if (tty) process.stderr.write('\n');
		writeFileSync(f.out, JSON.stringify(record, null, '\t') + '\n');
		const byStrategy = STRATEGIES.map((s) => `${s} ${record.runs.filter((r) => r.strategy === s).length}`).join(', ');
		console.error(`calibrate: ${record.runs.length} runs (${byStrategy}) in ${record.durationSeconds.toFixed(1)} s, wrote ${f.out}`);
		for (const note of record.notes) console.error(`calibrate: note: ${note}`);
	}
};
