/**
 * Shared shapes of the engine. The engine imports nothing of the app; the app,
 * the CLI and the calibration runs all speak these types.
 */

export type ValueKind = 'binary' | 'real';
export type Loss = 'hinge' | 'sqhinge' | 'logistic';
export type StrategyName = 'memory' | 'block' | 'selective' | 'stream';

/**
 * A set of examples in compressed sparse row form, held in RAM.
 * Feature indices are 0-based here (svmlight text rows are 1-based on disk).
 */
export interface SparseRows {
	/** number of rows */
	n: number;
	/** feature dimension (max index + 1) */
	d: number;
	/** +1 or -1 per row */
	labels: Int8Array;
	/** row i spans indices[rowPtr[i] .. rowPtr[i+1]) */
	rowPtr: Float64Array;
	indices: Uint32Array;
	/** null for binary data: every stored value is 1 */
	values: Float32Array | null;
}

/** Statistics of a dataset, from the text parser, the binary header or a sample. */
export interface DatasetProfile {
	rows: number;
	/** largest 1-based feature index seen */
	maxFeature: number;
	nnzMean: number;
	nnzStd: number;
	positiveFraction: number;
	bytesPerRow: number;
	valueKind: ValueKind;
	bytes: number;
}

/** Options every training strategy accepts. */
export interface TrainOptions {
	/** path to a Loadline binary row file */
	data: string;
	loss: Loss;
	C: number;
	strategy: StrategyName;
	/** relative duality gap to stop at; default 0.01 */
	tol?: number;
	/** epoch limit; default 1000 */
	maxEpochs?: number;
	seed?: number;
	/** byte budget for blocks / cache; default: no limit (memory strategy ignores it except for feasibility) */
	memoryBytes?: number;
	/** reader throttle in MB/s (1e6 bytes); default: unthrottled */
	diskMBps?: number;
	/** block strategy: zlib-compress blocks on disk */
	compress?: boolean;
	/** progress callback: relative gap after each epoch or outer iteration */
	onProgress?: (p: { seconds: number; gap: number; epochs: number }) => void;
}

/** What a training run reports (the `train --json` object). */
export interface TrainReport {
	strategy: StrategyName;
	loss: Loss;
	C: number;
	primal: number;
	dual: number;
	gap: number;
	epochs: number;
	passes: number;
	updates: number;
	cacheHitRate: number;
	readSeconds: number;
	computeSeconds: number;
	wallSeconds: number;
	peakMemoryBytes: number;
	accuracy: number;
	/** outer iterations for block and selective; 0 otherwise */
	outerIterations: number;
	/** (seconds, relative gap) samples for convergence charts */
	trace: { seconds: number; gap: number }[];
	/** weight vector when requested */
	w?: Float64Array;
}
