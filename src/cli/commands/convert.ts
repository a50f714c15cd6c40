/** `loadline convert IN OUT`: svmlight text rows to Loadline binary rows. */
import { existsSync } from 'node:fs';
import { CliError, numberFlag, parseFlags, type Command } from '../args.js';
import { convertSvmlightToBinary } from '../../lib/engine/data/convert.js';
import { TextRowError } from '../../lib/engine/data/svmlight.js';
import { DEFAULT_CHUNK_ROWS } from '../../lib/engine/data/binary.js';
import { formatProfile } from './profile.js';

const help = `loadline convert IN OUT [options]

Convert svmlight text rows (IN) to Loadline binary rows (OUT). IN is read twice:
first to check every line and find the value kind, then to write OUT.

  --chunk-rows N    rows per binary chunk (default ${DEFAULT_CHUNK_ROWS})
  --json            print the profile of IN and the binary header as JSON`;

export const convert: Command = {
	summary: 'convert svmlight text rows to binary rows',
	help,
	async run(argv) {
		const { values: f, positionals } = parseFlags(argv, { 'chunk-rows': { type: 'string' }, json: { type: 'boolean' } }, true);
		if (positionals.length !== 2) throw new CliError(`expects IN and OUT, got ${positionals.length} path${positionals.length === 1 ? '' : 's'}`);
		const [input, output] = positionals;
		if (!existsSync(input)) throw new CliError(`input file "${input}" not found`);
		const chunkRows = numberFlag(f['chunk-rows'], 'chunk-rows', { default: DEFAULT_CHUNK_ROWS, min: 1, max: 1 << 24, integer: true });
		try {
			const { profile, header } = await convertSvmlightToBinary(input, output, { chunkRows });
			console.log(f.json ? JSON.stringify({ profile, header }) : `wrote ${output}: ${header.n} rows, d ${header.d}, ${header.nnz} nonzeros, ${header.chunks} chunks\n${formatProfile(profile)}`);
		} catch (err) {
			if (err instanceof TextRowError) throw new CliError(`${input}: ${err.message}`);
			throw err;
		}
	}
};
