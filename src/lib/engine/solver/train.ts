/**
 * One entry point for every strategy: check and default the options (options.ts), then run
 * memory, block, selective or stream. The CLI and the calibration runs call exactly this.
 */
import type { TrainReport } from '../types.js';
import { resolveOptions, type SolverOptions } from './options.js';
import { trainMemory } from './strategy-memory.js';
import { trainBlocks } from './strategy-block.js';
import { trainStream } from './strategy-stream.js';

export { OptionError, type SolverOptions } from './options.js';

export async function train(opts: SolverOptions): Promise<TrainReport> {
	const o = resolveOptions(opts);
	switch (o.strategy) {
		case 'memory':
			return trainMemory(o);
		case 'block':
			return trainBlocks(o, false);
		case 'selective':
			return trainBlocks(o, true);
		case 'stream':
			return trainStream(o);
	}
}
