/** `loadline gen`: write a seeded synthetic dataset as svmlight text rows or binary rows. */
import { CliError, choiceFlag, numberFlag, parseFlags, type Command } from '../args.js';
import { GENERATE_DEFAULTS, GenerateOptionError, generateToFile, type GenerateOptions } from '../../lib/engine/data/generate.js';
import { formatProfile } from './profile.js';

const D = GENERATE_DEFAULTS;

const help = `loadline gen --out FILE [options]

Write a seeded synthetic binary-classification dataset, streamed to disk.

  --rows N          rows (default ${D.rows})
  --features D      feature dimension (default ${D.features})
  --index-range R   spread the D features over indices 0..R (R ≥ D; the file's dimension; default D)
  --nnz K           mean nonzeros per row (default ${D.nnz})
  --nnz-spread S    coefficient of variation of the row length, 0 = fixed (default ${D.nnzSpread})
  --positive P      positive fraction, within [noise, 1 - noise] (default ${D.positive})
  --noise Q         probability a label is flipped, below 0.5 (default ${D.noise})
  --skew S          Zipf-like feature popularity exponent, 0 = uniform (default ${D.skew})
  --values KIND     binary | real (default ${D.values})
  --seed X          random seed; equal seeds give equal files (default ${D.seed})
  --format F        svm | bin (default: bin when FILE ends in .bin, else svm)
  --out FILE        output path (required)
  --json            print the dataset profile as JSON`;

const fieldFlag: Record<keyof GenerateOptions, string> = {
	rows: 'rows',
	features: 'features',
	indexRange: 'index-range',
	nnz: 'nnz',
	nnzSpread: 'nnz-spread',
	positive: 'positive',
	noise: 'noise',
	skew: 'skew',
	values: 'values',
	seed: 'seed'
};

export const gen: Command = {
	summary: 'write a synthetic dataset (svmlight text or binary rows)',
	help,
	async run(argv) {
		const { values: f } = parseFlags(argv, {
			rows: { type: 'string' },
			features: { type: 'string' },
			'index-range': { type: 'string' },
			nnz: { type: 'string' },
			'nnz-spread': { type: 'string' },
			positive: { type: 'string' },
			noise: { type: 'string' },
			skew: { type: 'string' },
			values: { type: 'string' },
			seed: { type: 'string' },
			format: { type: 'string' },
			out: { type: 'string' },
			json: { type: 'boolean' }
		});
		if (!f.out) throw new CliError('--out is required');
		const opts: GenerateOptions = {
			rows: numberFlag(f.rows, 'rows', { default: D.rows, min: 1, integer: true }),
			features: numberFlag(f.features, 'features', { default: D.features, min: 1, integer: true }),
			indexRange: f['index-range'] === undefined ? undefined : numberFlag(f['index-range'], 'index-range', { min: 1, integer: true }),
			nnz: numberFlag(f.nnz, 'nnz', { default: D.nnz, min: 1 }),
			nnzSpread: numberFlag(f['nnz-spread'], 'nnz-spread', { default: D.nnzSpread, min: 0 }),
			positive: numberFlag(f.positive, 'positive', { default: D.positive }),
			noise: numberFlag(f.noise, 'noise', { default: D.noise, min: 0 }),
			skew: numberFlag(f.skew, 'skew', { default: D.skew, min: 0 }),
			values: choiceFlag(f.values, 'values', ['binary', 'real'] as const, D.values),
			seed: numberFlag(f.seed, 'seed', { default: D.seed, integer: true })
		};
		const format = choiceFlag(f.format, 'format', ['svm', 'bin'] as const, f.out.endsWith('.bin') ? 'bin' : 'svm');
		const tty = process.stderr.isTTY;
		const started = performance.now();
		try {
			const profile = await generateToFile(opts, f.out, format, tty ? (done, rows) => {
				const s = (performance.now() - started) / 1000;
				process.stderr.write(`\rgen: ${done.toLocaleString('en')} / ${rows.toLocaleString('en')} rows (${((100 * done) / rows).toFixed(0)} %, ${s.toFixed(1)} s)`);
			} : undefined);
			if (tty) process.stderr.write('\n');
			console.log(f.json ? JSON.stringify(profile) : `wrote ${f.out} (${format})\n${formatProfile(profile)}`);
		} catch (err) {
			if (err instanceof GenerateOptionError) throw new CliError(`--${fieldFlag[err.field]}: ${err.message.slice(err.field.length + 1)}`);
			throw err;
		}
	}
};
