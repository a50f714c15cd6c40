/** `loadline profile FILE`: dataset statistics of text or binary rows. */
import { existsSync } from 'node:fs';
import { CliError, parseFlags, type Command } from '../args.js';
import { profileFile } from '../../lib/engine/data/profile.js';
import { TextRowError } from '../../lib/engine/data/svmlight.js';
import { BinaryFormatError } from '../../lib/engine/data/binary.js';
import type { DataProfile } from '../../lib/engine/data/stats.js';

const help = `loadline profile FILE [--json]

Statistics of a dataset: rows, largest feature index, mean and spread of nonzeros
per row, positive fraction, bytes per row, value kind. FILE may be svmlight text
rows (parsed in full, so every line is checked) or Loadline binary rows (header
plus one pass), told apart by the binary magic.

  --json            print one JSON object`;

export function formatProfile(p: DataProfile): string {
	const rows: [string, string][] = [
		['format', p.format],
		['rows', String(p.rows)],
		['max feature', String(p.maxFeature)],
		['nonzeros', String(p.nnz)],
		['nnz per row', `${p.nnzMean.toFixed(2)} ± ${p.nnzStd.toFixed(2)}`],
		['positive', p.positiveFraction.toFixed(4)],
		['values', p.valueKind],
		['bytes', String(p.bytes)],
		['bytes per row', p.bytesPerRow.toFixed(1)]
	];
	return rows.map(([k, v]) => `  ${k.padEnd(14)} ${v}`).join('\n');
}

export const profile: Command = {
	summary: 'statistics of a dataset file (text or binary rows)',
	help,
	async run(argv) {
		const { values: f, positionals } = parseFlags(argv, { json: { type: 'boolean' } }, true);
		if (positionals.length !== 1) throw new CliError(`expects one FILE, got ${positionals.length}`);
		const [file] = positionals;
		if (!existsSync(file)) throw new CliError(`file "${file}" not found`);
		try {
			const p = await profileFile(file);
			console.log(f.json ? JSON.stringify(p) : `${file}\n${formatProfile(p)}`);
		} catch (err) {
			if (err instanceof TextRowError) throw new CliError(`${file}: ${err.message}`);
			if (err instanceof BinaryFormatError) throw new CliError(err.message);
			throw err;
		}
	}
};
