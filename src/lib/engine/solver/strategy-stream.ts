import type { TrainReport } from '../types.js';
import type { ResolvedOptions } from './options.js';
export async function trainStream(o: ResolvedOptions): Promise<TrainReport> {
	throw new Error(`stream: not yet ${o.data}`);
}
