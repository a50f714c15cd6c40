/**
 * block and selective strategies: block minimization of the SVM / logistic dual when the data
 * does not fit in RAM.
 *
 *   Split {1..n} into blocks B₁..B_b that each fit the budget (one preparation pass, blocks.ts).
 *   Outer iteration: for each block Bⱼ in turn, load it and run dual coordinate descent (with
 *   shrinking kept per block) on α_Bⱼ for innerEpochs × |Bⱼ| coordinate visits, all other αᵢ fixed; w = Σ αᵢ yᵢ xᵢ and every αᵢ stay in RAM.
 *   (Yu, Hsieh, Chang, Lin, "Large linear classification when data cannot fit in memory", KDD 2010.)
 *   selective: the subproblem is solved over Bⱼ ∪ K, where the cache K holds the most informative
 *   examples seen so far (α off its bounds, or a small projected gradient), refilled after each
 *   block (Chang, Roth, "Selective block minimization for faster convergence of limited memory
 *   large-scale linear models", KDD 2011).
 * Stopping: after each outer iteration the gap is estimated from the margin each example had
 * right after its own last update (no extra pass); when that estimate is ≤ tol a checking pass
 * over the blocks computes the exact primal, and the run stops only if the exact gap is ≤ tol.
 * The estimate runs optimistic (other blocks move w after an example's margin was logged), so
 * after a failed check the next one is scheduled where the exact gaps measured so far, extended
 * as a straight line in ln gap, reach tol (between 1 and 16 outer iterations on).
 * The checking pass counts as a pass. No bias feature.
 * Counted memory: w (8d), α (8n), C − α (8n, logistic), the margin log (8n), the block(s) in RAM;
 * selective also the cache, the joined working set and a flag per example.
 */
import type { SparseRows, TrainReport } from '../types.js';
import { readBinaryHeader } from '../data/binary.js';
import { Throttle } from '../data/throttle.js';
import { lossTable, relativeGap } from './losses.js';
import { addMargins, dualFrom, emptySums, lossSumOfMargins, primalFrom } from './objective.js';
import { OptionError, type ResolvedOptions } from './options.js';
import { Meter, hitRate, stateBytes } from './meter.js';
import { loadBlock, prepareBlocks, type BlockSet } from './blocks.js';
import { createSolver, seededRng } from './solve-rows.js';
import type { CoordinateSolver } from './dcd.js';
import { joinRows, rowsBytes, workingSetBytes } from './rows.js';
import { dot } from './sparse.js';

const EMPTY_ROWS: SparseRows = { n: 0, d: 0, labels: new Int8Array(0), rowPtr: new Float64Array(1), indices: new Uint32Array(0), values: null };

/** smallest block budget worth running: a few thousand short rows */
const MIN_BLOCK_BYTES = 64 * 1024;

export async function trainBlocks(o: ResolvedOptions, selective: boolean): Promise<TrainReport> {
	const meter = new Meter();
	const h = await readBinaryHeader(o.data);
	const { n, d } = h;
	const logistic = o.loss === 'logistic';
	const state = stateBytes(n, d, logistic, true) + (selective ? n : 12 * n);
	// the sequential reader's two buffers (one read ahead) are part of the budget
	const chunkBytes = Math.max(64 * 1024, Math.min(8 << 20, Math.floor(o.memoryBytes / 32)));
	const free = o.memoryBytes - state - 2 * chunkBytes;
	// selective: block + cache are joined into one working set (a second copy), with 4 bytes of id per
	// row (at most 4/21 of the rows' bytes), and a compressed block's file bytes while it is unpacked
	const share = free / (2 + 4 / 21 + (o.compress ? 1 - o.cacheFraction : 0));
	const blockBudget = selective ? share * (1 - o.cacheFraction) : o.compress ? free / 2 : free;
	const cacheBudget = selective ? share * o.cacheFraction : 0;
	if (blockBudget < MIN_BLOCK_BYTES) {
		throw new OptionError(`memoryBytes: ${o.memoryBytes} bytes leave ${Math.max(0, Math.floor(blockBudget))} for a block after w, α, the margin log and read buffers (${state + 2 * chunkBytes} bytes); need at least ${MIN_BLOCK_BYTES}`);
	}
	const throttle = new Throttle(o.diskMBps);
	const rng = seededRng(o.seed);
	const w = new Float64Array(d);
	const alpha = new Float64Array(n);
	const comp = logistic ? new Float64Array(n).fill(o.C) : null;
	const margins = new Float64Array(n);
	meter.hold(state);

	// preparation holds the rows of one block, the reader's buffers and one section being written
	meter.hold(state + Math.min(blockBudget, workingSetBytes(n, h.nnz, h.valueKind === 'real')) + 2 * chunkBytes);
	const set: BlockSet = await meter.read(() => prepareBlocks(o.data, d, blockBudget, { compress: o.compress, throttle, workDir: o.workDir, diskMBps: o.diskMBps, chunkBytes }));
	meter.passes = 1;
	try {
		let visits = 0;
		let outer = 0;
		let primal = NaN;
		let dual = NaN;
		let gap = Infinity;
		let accuracy = 0;
		let converged = false;
		// selective cache: rows, their global ids, and a flag per example
		let cache: SparseRows | null = null;
		let cacheIds = new Uint32Array(0);
		const inCache = selective ? new Uint8Array(n) : null;
		const { upper, diag } = lossTable(o.loss, o.C);
		// block: one solver per block keeps its shrinking state (12 bytes per example, counted in `state`)
		const blockSolvers: (CoordinateSolver | undefined)[] = [];
		let nextCheck = 0;
		// (outer iteration, ln exact gap) of the checks so far
		const checks: { outer: number; lnGap: number }[] = [];

		const exactCheck = async () => {
			const sums = emptySums();
			for (const b of set.blocks) {
				const rows = await meter.read(() => loadBlock(set, b, d, throttle, chunkBytes));
				meter.hold(state + b.memoryBytes + (set.compress ? b.diskBytes : 0) + (cache ? rowsBytes(cache) : 0));
				meter.compute(() => {
					addMargins(sums, rows, w, o.loss);
					// the exact margins also refresh the log the estimate uses
					refreshMargins(rows, b.start, w, margins);
				});
			}
			meter.passes++;
			primal = primalFrom(w, o.C, sums.lossSum);
			dual = dualFrom(o.loss, o.C, w, alpha, comp);
			gap = relativeGap(primal, dual);
			accuracy = sums.correct / n;
			meter.trace.push({ seconds: meter.seconds(), gap });
		};

		while (visits / n < o.maxEpochs) {
			outer++;
			for (let bi = 0; bi < set.blocks.length; bi++) {
				const b = set.blocks[bi];
				const block = await meter.read(() => loadBlock(set, b, d, throttle, chunkBytes));
				meter.exampleReads += block.n;
				if (!selective) {
					meter.hold(state + b.memoryBytes + (set.compress ? b.diskBytes : 0));
					visits += meter.compute(() => {
						let solver = blockSolvers[bi];
						if (solver === undefined) {
							const ws = {
								rows: block,
								alpha: alpha.subarray(b.start, b.start + b.n),
								comp: comp ? comp.subarray(b.start, b.start + b.n) : null,
								margins: margins.subarray(b.start, b.start + b.n)
							};
							solver = blockSolvers[bi] = createSolver(ws, w, o.loss, o.C, rng);
						} else solver.reload(block);
						const before = solver.updates;
						innerSolve(solver, o.innerEpochs * block.n);
						// the block leaves RAM; its solver keeps only per-example numbers
						solver.reload(EMPTY_ROWS);
						return solver.updates - before;
					});
					continue;
				}
				// selective: working set = cache ∪ (block rows not already cached)
				const cached: SparseRows = cache ?? EMPTY_ROWS;
				const flags = inCache as Uint8Array;
				const ids = new Uint32Array(cached.n + block.n);
				let m = 0;
				for (let i = 0; i < cached.n; i++) ids[m++] = cacheIds[i];
				for (let i = 0; i < block.n; i++) if (flags[b.start + i] === 0) ids[m++] = b.start + i;
				const wsRows = joinRows([cached, block], d, (part, i) => part === 0 || flags[b.start + i] === 0);
				meter.hold(state + rowsBytes(cached) + b.memoryBytes + (set.compress ? b.diskBytes : 0) + rowsBytes(wsRows) + 4 * ids.length);
				const result = meter.compute(() => {
					const la = new Float64Array(m);
					const lc = comp ? new Float64Array(m) : null;
					const lm = new Float64Array(m);
					for (let i = 0; i < m; i++) {
						la[i] = alpha[ids[i]];
						if (lc && comp) lc[i] = comp[ids[i]];
					}
					const solver = createSolver({ rows: wsRows, alpha: la, comp: lc, margins: lm }, w, o.loss, o.C, rng);
					innerSolve(solver, o.innerEpochs * block.n);
					for (let i = 0; i < m; i++) {
						alpha[ids[i]] = la[i];
						if (lc && comp) comp[ids[i]] = lc[i];
						margins[ids[i]] = lm[i];
					}
					// informative: free α scores 0, a bound α scores its distance from violating the KKT conditions
					const score = new Float64Array(m);
					for (let i = 0; i < m; i++) {
						const a = la[i];
						const G = lm[i] - 1 + diag * a;
						score[i] = logistic ? Math.abs(lm[i]) : a > 0 && a < upper ? 0 : a === 0 ? Math.max(G, 0) : Math.max(-G, 0);
					}
					const order = Array.from({ length: m }, (_, i) => i).sort((x, y) => score[x] - score[y]);
					const keep = new Uint8Array(m);
					let kept = 0;
					let keptNnz = 0;
					const real = wsRows.values !== null;
					for (const i of order) {
						const len = wsRows.rowPtr[i + 1] - wsRows.rowPtr[i];
						if (workingSetBytes(kept + 1, keptNnz + len, real) + 4 * (kept + 1) > cacheBudget) break;
						keep[i] = 1;
						kept++;
						keptNnz += len;
					}
					for (let i = 0; i < m; i++) flags[ids[i]] = keep[i];
					const nextIds = new Uint32Array(kept);
					let k = 0;
					for (let i = 0; i < m; i++) if (keep[i]) nextIds[k++] = ids[i];
					return { updates: solver.updates, next: joinRows([wsRows], d, (_, i) => keep[i] === 1), nextIds };
				});
				meter.hold(state + rowsBytes(wsRows) + 4 * ids.length + rowsBytes(result.next) + 4 * result.nextIds.length);
				visits += result.updates;
				cache = result.next;
				cacheIds = result.nextIds;
			}
			meter.passes++;
			// estimate from the margin log; the exact check only when the estimate says done
			const estimate = relativeGap(primalFrom(w, o.C, lossSumOfMargins(o.loss, margins)), dualFrom(o.loss, o.C, w, alpha, comp));
			meter.trace.push({ seconds: meter.seconds(), gap: estimate });
			o.onProgress?.({ seconds: meter.seconds(), gap: estimate, epochs: visits / n });
			if (estimate <= o.tol && outer >= nextCheck) {
				await exactCheck();
				if (gap <= o.tol) {
					converged = true;
					break;
				}
				// the estimate runs optimistic: check again where the trend of the exact gaps reaches tol, and re-examine every shrunk example
				checks.push({ outer, lnGap: Math.log(Math.max(gap, 1e-300)) });
				nextCheck = outer + nextCheckIn(checks, Math.log(o.tol));
				for (const s of blockSolvers) s?.tighten();
			}
		}
		if (!converged) await exactCheck();
		return {
			strategy: selective ? 'selective' : 'block',
			loss: o.loss,
			C: o.C,
			primal,
			dual,
			gap,
			epochs: visits / n,
			passes: meter.passes,
			updates: visits,
			cacheHitRate: hitRate(meter.exampleReads, visits),
			readSeconds: meter.readMs / 1000,
			computeSeconds: meter.computeMs / 1000,
			wallSeconds: meter.seconds(),
			peakMemoryBytes: meter.peakBytes,
			accuracy,
			outerIterations: outer,
			trace: meter.trace,
			...(o.keepWeights ? { w: Float64Array.from(w) } : {})
		};
	} finally {
		set.dispose();
	}
}

/** Outer iterations until the next exact check: where the last two checks' ln gap, as a line, meets ln tol. */
function nextCheckIn(checks: { outer: number; lnGap: number }[], lnTol: number): number {
	if (checks.length < 2) return 2;
	const a = checks[checks.length - 2];
	const b = checks[checks.length - 1];
	const slope = (b.lnGap - a.lnGap) / (b.outer - a.outer);
	if (!(slope < 0)) return 16;
	return Math.min(16, Math.max(1, Math.ceil((lnTol - b.lnGap) / slope)));
}

/**
 * Coordinate visits worth `budget` (innerEpochs × the rows read), so each read is amortized over
 * the same work whether or not shrinking makes epochs short; a settled block tightens and goes on.
 */
function innerSolve(solver: CoordinateSolver, budget: number): void {
	const start = solver.updates;
	while (solver.updates - start < budget) {
		const before = solver.updates;
		solver.epoch();
		if (solver.updates === before) break;
		if (solver.settled && !solver.tighten()) break;
	}
}

/** Exact yᵢ wᵀxᵢ of a block's rows into the margin log. */
function refreshMargins(rows: SparseRows, start: number, w: Float64Array, margins: Float64Array): void {
	for (let i = 0; i < rows.n; i++) margins[start + i] = rows.labels[i] * dot(w, rows.indices, rows.values, rows.rowPtr[i], rows.rowPtr[i + 1]);
}
