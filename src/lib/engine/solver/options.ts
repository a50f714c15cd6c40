/**
 * Training options checked and defaulted in one place. Every option with its default:
 *   tol          relative duality gap (P − D)/P to stop at             default 0.01
 *   maxEpochs    trainer epochs (visits / n) before stopping           default 1000
 *   seed         seed of the random coordinate order                   default 1
 *   memoryBytes  budget for blocks / cache (block, selective, stream)  default: unlimited (memory), 256 MiB (others)
 *   diskMBps     reader throttle in MB/s                               default: unthrottled
 *                (files in the page cache read at memory speed; the throttle emulates the target's disk)
 *   compress     block strategy: zlib-compress the block files         default false
 *   innerEpochs  block and selective: epochs on each block per visit   default 1 (block), 3 (selective)
 *                (block: more inner epochs were measured to buy no fewer passes, only more compute;
 *                selective: its cache makes the extra epochs pay, 29 passes against 38)
 *   cacheFraction selective: share of the budget kept for the cache    default 0.5
 *   segments     stream: cache segments (reader and trainer hand them over) default 16
 *   workDir      block and selective: folder for block files           default: a fresh folder under the OS temp dir
 *   keepWeights  return w in the report                                default false
 */
import type { Loss, StrategyName, TrainOptions } from '../types.js';

export const LOSSES: readonly Loss[] = ['hinge', 'sqhinge', 'logistic'];
export const STRATEGIES: readonly StrategyName[] = ['memory', 'block', 'selective', 'stream'];

/** Options the engine accepts beyond the shared TrainOptions. */
export interface SolverOptions extends TrainOptions {
	innerEpochs?: number;
	cacheFraction?: number;
	segments?: number;
	workDir?: string;
	keepWeights?: boolean;
	/** stream: called with every read of the reader thread (tests check the order) */
	onRead?: (pass: number, fileOffset: number, bytes: number) => void;
}

export interface ResolvedOptions {
	data: string;
	loss: Loss;
	C: number;
	strategy: StrategyName;
	tol: number;
	maxEpochs: number;
	seed: number;
	memoryBytes: number;
	diskMBps: number | undefined;
	compress: boolean;
	innerEpochs: number;
	cacheFraction: number;
	segments: number;
	workDir: string | undefined;
	keepWeights: boolean;
	onProgress: TrainOptions['onProgress'];
	onRead: SolverOptions['onRead'];
}

/** Thrown for a bad option; the message names the field. */
export class OptionError extends Error {}

const DEFAULT_BUDGET = 256 * 2 ** 20;
/** trainer epochs before a run stops short of its tolerance */
export const DEFAULT_MAX_EPOCHS = 1000;

function positive(name: string, x: number | undefined, fallback: number, integer = false): number {
	if (x === undefined) return fallback;
	if (typeof x !== 'number' || !Number.isFinite(x) || x <= 0) throw new OptionError(`${name} must be a positive number, got ${String(x)}`);
	if (integer && !Number.isInteger(x)) throw new OptionError(`${name} must be a whole number, got ${x}`);
	return x;
}

export function resolveOptions(o: SolverOptions): ResolvedOptions {
	if (typeof o.data !== 'string' || o.data === '') throw new OptionError('data must name a binary row file');
	if (!LOSSES.includes(o.loss)) throw new OptionError(`loss must be one of ${LOSSES.join(', ')}, got ${String(o.loss)}`);
	if (!STRATEGIES.includes(o.strategy)) throw new OptionError(`strategy must be one of ${STRATEGIES.join(', ')}, got ${String(o.strategy)}`);
	const C = positive('C', o.C, NaN);
	if (Number.isNaN(C)) throw new OptionError('C is required');
	const cacheFraction = o.cacheFraction ?? 0.5;
	if (!(cacheFraction > 0 && cacheFraction < 1)) throw new OptionError(`cacheFraction must be between 0 and 1, got ${cacheFraction}`);
	return {
		data: o.data,
		loss: o.loss,
		C,
		strategy: o.strategy,
		tol: positive('tol', o.tol, 0.01),
		maxEpochs: positive('maxEpochs', o.maxEpochs, DEFAULT_MAX_EPOCHS),
		seed: o.seed ?? 1,
		memoryBytes: positive('memoryBytes', o.memoryBytes, o.strategy === 'memory' ? Infinity : DEFAULT_BUDGET),
		diskMBps: o.diskMBps === undefined ? undefined : positive('diskMBps', o.diskMBps, 0),
		compress: o.compress ?? false,
		innerEpochs: positive('innerEpochs', o.innerEpochs, o.strategy === 'selective' ? 3 : 1, true),
		cacheFraction,
		segments: positive('segments', o.segments, 16, true),
		workDir: o.workDir,
		keepWeights: o.keepWeights ?? false,
		onProgress: o.onProgress,
		onRead: o.onRead
	};
}
