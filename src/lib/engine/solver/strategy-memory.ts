/**
 * memory strategy: load the whole binary row file (one pass), then dual coordinate descent with
 * shrinking in RAM (solve-rows.ts). Counted memory: the rows as loaded + w + α (+ C − α for logistic)
 * + the loader's read buffers. A weight vector beyond the caches gets its features renumbered by
 * popularity first (renumber.ts; its cost counts as compute); the map back is d × 4 bytes more.
 */
import type { TrainReport } from '../types.js';
import { loadBinary, readBinaryHeader } from '../data/binary.js';
import type { ResolvedOptions } from './options.js';
import { OptionError } from './options.js';
import { Meter, hitRate, stateBytes } from './meter.js';
import { solveRows } from './solve-rows.js';
import { workingSetBytes } from './rows.js';
import { renumberByPopularity, renumbers, weightsInOldOrder } from './renumber.js';

/** the loader's two read buffers (one read ahead) */
const CHUNK_BYTES = 8 << 20;

/** What the memory strategy counts besides the rows: w, α (+ C − α), read buffers, the renumbering map. */
export function memoryStateBytes(n: number, d: number, logistic: boolean): number {
	return stateBytes(n, d, logistic, false) + 2 * CHUNK_BYTES + (renumbers(d) ? 4 * d : 0);
}

export async function trainMemory(o: ResolvedOptions): Promise<TrainReport> {
	const meter = new Meter();
	const h = await readBinaryHeader(o.data);
	const need = workingSetBytes(h.n, h.nnz, h.valueKind === 'real') + memoryStateBytes(h.n, h.d, o.loss === 'logistic');
	if (need > o.memoryBytes) throw new OptionError(`memoryBytes: the memory strategy needs ${need} bytes for ${h.n} rows, the budget is ${o.memoryBytes}`);
	const rows = await meter.read(() => loadBinary(o.data, { throttleMBps: o.diskMBps, chunkBytes: CHUNK_BYTES }));
	meter.passes = 1;
	meter.exampleReads = rows.n;
	meter.hold(need);
	const readSeconds = meter.readMs / 1000;
	const newIndex = renumbers(h.d) ? meter.compute(() => renumberByPopularity(rows)) : null;
	const s = meter.compute(() =>
		solveRows(rows, {
			loss: o.loss,
			C: o.C,
			tol: o.tol,
			maxEpochs: o.maxEpochs,
			seed: o.seed,
			onEpoch: (p) => o.onProgress?.({ seconds: readSeconds + p.seconds, gap: p.gap, epochs: p.epochs })
		})
	);
	return {
		strategy: 'memory',
		loss: o.loss,
		C: o.C,
		primal: s.primal,
		dual: s.dual,
		gap: s.gap,
		epochs: s.epochs,
		passes: meter.passes,
		updates: s.updates,
		cacheHitRate: hitRate(meter.exampleReads, s.updates),
		readSeconds,
		computeSeconds: meter.computeMs / 1000,
		wallSeconds: meter.seconds(),
		peakMemoryBytes: meter.peakBytes,
		accuracy: s.accuracy,
		outerIterations: 0,
		trace: s.trace.map((t) => ({ seconds: readSeconds + t.seconds, gap: t.gap })),
		...(o.keepWeights ? { w: newIndex ? weightsInOldOrder(s.w, newIndex) : s.w } : {})
	};
}
