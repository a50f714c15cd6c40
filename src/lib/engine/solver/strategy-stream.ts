/**
 * stream strategy: a reader thread streams the binary row file sequentially into a bounded cache
 * in shared memory (stream-reader.ts), while this trainer cycles over the resident examples doing
 * dual coordinate descent updates and evicts examples that are far from the margin.
 *
 *   Same duals as dcd.ts (hinge, squared hinge) and logistic-dcd.ts (logistic); no bias feature.
 *   Sweep: one random-order pass over the resident rows with the closed-form (SVM) or Newton
 *   (logistic) coordinate step; w and every αᵢ stay in RAM, so an evicted example keeps its αᵢ.
 *   Eviction (SVM): the shrinking test of Hsieh et al. 2008: αᵢ = 0 with G > max PG of the last
 *   sweep, or αᵢ = U with G < min PG; logistic: αᵢ ≤ 10⁻³C on the correct side of the margin.
 *   Evictions happen only while the reader waits for room; when no segment has evicted rows to compact, the oldest segment is
 *   dropped whole (its rows return on the next pass). A budget that holds every row allocates only
 *   that, never evicts, and hands the reader the unused tails of part-full segments: one pass.
 *   The design follows the reader/trainer split with a cache of informative examples of
 *   Matsushima, Vishwanathan, Smola, "Linear support vector machines via dual cached loops",
 *   KDD 2012, and the selective caching of Chang and Roth, KDD 2011.
 * Stopping: once per reader pass the gap is estimated from the margin each example had after its
 * last update; when the estimate is ≤ tol the exact primal is computed, from the cache when every
 * row is resident, else by pausing the reader for one checking pass (counted as a pass). The full dataset is never held in memory.
 * Counted memory: the shared cache, the reader's read buffer, the resident list (5 bytes per
 * possible row), w (8d), α (8n), C − α (8n, logistic), the margin log (8n), a cache flag (1n).
 */
import { Worker } from 'node:worker_threads';
import type { TrainReport } from '../types.js';
import { readBinaryChunkViews, readBinaryHeader } from '../data/binary.js';
import { lossAt, lossTable, relativeGap } from './losses.js';
import { dualFrom, lossSumOfMargins, primalFrom } from './objective.js';
import { OptionError, type ResolvedOptions } from './options.js';
import { Meter, hitRate, stateBytes } from './meter.js';
import { axpy, dot } from './sparse.js';
import { seededRng } from './solve-rows.js';
import { logisticStart, newtonStep } from './logistic-dcd.js';
import {
	C_ERROR,
	C_EVICTED,
	C_FREED,
	C_NEED_WORDS,
	C_PASSES,
	C_PAUSE,
	C_PUBLISHED,
	C_READER_WAITING,
	C_STOP,
	C_TRAINER_HUNGRY,
	FLAG_EVICTED,
	FLAG_NEGATIVE,
	ROW_HEADER_WORDS,
	SEG_FIELDS,
	SEG_FREE,
	SEG_OWNED,
	SEG_READY,
	allocateCache,
	cacheBytesPerWord,
	streamCacheBytes,
	lock,
	sharedBytes,
	unlock,
	viewCache
} from './stream-cache.js';
import type { ReaderData, ReaderResult } from './stream-reader.js';

/** logistic eviction: αᵢ this small (relative to C) means the example sits far on the correct side */
const LOGISTIC_EVICT = 1e-3;

export interface StreamReport extends TrainReport {
	/** bytes of the shared example cache */
	cacheBytes: number;
	/** most cache bytes ever holding rows (live, evicted-but-not-compacted, or being filled) */
	peakResidentBytes: number;
	/** reader throughput while training, MB/s (1e6 bytes): bytes read / training wall time */
	readerMBps: number;
	/** reader throughput while it reads, MB/s: bytes read / its time inside reads (throttle included) */
	readerBusyMBps: number;
	/** rows evicted by the projected-gradient test, and rows dropped with the oldest segment when nothing else made room */
	evicted: { byTest: number; withSegment: number };
}

export async function trainStream(o: ResolvedOptions): Promise<StreamReport> {
	const meter = new Meter();
	const h = await readBinaryHeader(o.data);
	const { n, d } = h;
	const real = h.valueKind === 'real';
	const logistic = o.loss === 'logistic';
	const S = o.segments;
	const state = stateBytes(n, d, logistic, true);
	const chunkBytes = Math.max(64 * 1024, Math.min(8 << 20, Math.floor(o.memoryBytes / 16)));
	const bytesPerWord = cacheBytesPerWord(real);
	const fixed = state + n + 2 * chunkBytes + 1024;
	const budgetWords = Math.floor((o.memoryBytes - fixed) / bytesPerWord / S);
	if (budgetWords < 256) {
		throw new OptionError(`memoryBytes: ${o.memoryBytes} bytes leave too little for a ${S}-segment cache after w, α, the margin log and read buffers (${fixed} bytes)`);
	}
	// a budget larger than the whole file allocates only what holds every row, and then never evicts
	const allWords = Math.ceil(streamCacheBytes(n, h.nnz, real, S) / bytesPerWord / S);
	const holdsAll = budgetWords >= allWords;
	const segmentWords = Math.min(budgetWords, allWords);
	const maxRows = Math.floor((S * segmentWords) / (ROW_HEADER_WORDS + 1));
	const buffers = allocateCache({ segments: S, segmentWords, real }, n);
	const cache = viewCache(buffers);
	const { control, table, idx, xsq, val, inCache, stats } = cache;
	for (let s = 0; s < S; s++) {
		table[s * SEG_FIELDS] = SEG_FREE;
		table[s * SEG_FIELDS + 1] = s * segmentWords;
		table[s * SEG_FIELDS + 2] = s * segmentWords;
	}
	const list = new Uint32Array(maxRows);
	const evict = new Uint8Array(maxRows);
	const cacheBytes = sharedBytes(buffers);
	meter.hold(state + cacheBytes + list.byteLength + evict.byteLength + 2 * chunkBytes);

	const w = new Float64Array(d);
	const alpha = new Float64Array(n);
	const comp = logistic ? new Float64Array(n).fill(o.C) : null;
	const margins = new Float64Array(n);
	const { diag, upper } = lossTable(o.loss, o.C);
	const C = o.C;
	const rng = seededRng(o.seed);

	// a .mjs bootstrap registers tsx in the worker, so the TypeScript reader runs under tsx and vitest alike
	const worker = new Worker(new URL('./stream-reader-boot.mjs', import.meta.url), {
		workerData: { path: o.data, buffers, chunkBytes, diskMBps: o.diskMBps, rows: n, logReads: o.onRead !== undefined } satisfies ReaderData
	});
	const finished = new Promise<ReaderResult>((resolve) => {
		worker.once('message', (m: ReaderResult) => resolve(m));
		worker.once('error', (e) => resolve({ error: e.message, reads: [] }));
		worker.once('exit', (code) => resolve({ error: code === 0 ? undefined : `reader thread exited with code ${code}`, reads: [] }));
	});

	const liveWords = new Int32Array(S);
	const ingestedTo = new Int32Array(S);
	const age = new Float64Array(S);
	for (let s = 0; s < S; s++) ingestedTo[s] = s * segmentWords;
	let ageCounter = 0;
	let R = 0;
	let evictions = 0;
	let evictedByTest = 0;
	let evictedWithSegment = 0;
	let visits = 0;
	let pgMaxOld = Infinity;
	let pgMinOld = -Infinity;
	let innerEps = 1e-2;
	let peakResidentWords = 0;
	let checkPasses = 0;
	let nextCheckAt = 1;
	let checkWait = 1;
	let lastEstimatePass = 0;
	let lastEstimateVisits = 0;
	let estimates = 0;
	let primal = NaN;
	let dual = NaN;
	let gap = Infinity;
	let accuracy = 0;
	let converged = false;
	let readerError: string | undefined;
	const step = new Float64Array(3);
	const alphaStart = logisticStart(C);
	const segOf = (p: number) => Math.floor(p / segmentWords);

	const ingest = () => {
		const got: number[] = [];
		lock(control);
		for (let s = 0; s < S; s++) {
			if (table[s * SEG_FIELDS] === SEG_READY) {
				table[s * SEG_FIELDS] = SEG_OWNED;
				got.push(s);
			}
		}
		unlock(control);
		for (const s of got) {
			let p = ingestedTo[s];
			const end = table[s * SEG_FIELDS + 2];
			while (p < end) {
				const words = ROW_HEADER_WORDS + idx[p + 1];
				list[R] = p;
				idx[p + 3] = R;
				R++;
				liveWords[s] += words;
				p += words;
				meter.exampleReads++;
			}
			ingestedTo[s] = end;
			age[s] = ++ageCounter;
		}
		let used = 0;
		for (let s = 0; s < S; s++) used += ingestedTo[s] - s * segmentWords;
		if (used > peakResidentWords) peakResidentWords = used;
	};

	const removeAt = (r: number) => {
		const p = list[r];
		idx[p + 2] |= FLAG_EVICTED;
		liveWords[segOf(p)] -= ROW_HEADER_WORDS + idx[p + 1];
		Atomics.store(inCache, idx[p], 0);
		evictions++;
		R--;
		if (r !== R) {
			list[r] = list[R];
			idx[list[r] + 3] = r;
		}
	};

	/** slide a segment's live rows to its front and hand the rest back to the reader */
	const compact = (s: number) => {
		let src = s * segmentWords;
		let dst = src;
		const end = ingestedTo[s];
		while (src < end) {
			const words = ROW_HEADER_WORDS + idx[src + 1];
			if ((idx[src + 2] & FLAG_EVICTED) === 0) {
				if (src !== dst) {
					idx.copyWithin(dst, src, src + words);
					if (val) val.copyWithin(dst, src, src + words);
					list[idx[dst + 3]] = dst;
				}
				dst += words;
			}
			src += words;
		}
		ingestedTo[s] = dst;
		lock(control);
		table[s * SEG_FIELDS + 1] = dst;
		table[s * SEG_FIELDS + 2] = dst;
		table[s * SEG_FIELDS] = SEG_FREE;
		unlock(control);
		Atomics.add(control, C_FREED, 1);
		Atomics.notify(control, C_FREED);
	};

	/**
	 * A cache that holds every row: a reader waiting for room (the caller checks) gets back the unused tails of
	 * segments published part-full (to feed a hungry trainer) instead of evictions. True when a tail was handed back.
	 */
	// below the slack streamCacheBytes leaves per segment (4 mean rows), so a cache sized to hold every row does
	const minTail = 2 * (ROW_HEADER_WORDS + h.nnz / Math.max(1, n));
	const returnTails = (): boolean => {
		let returned = false;
		for (let s = 0; s < S; s++) {
			if (table[s * SEG_FIELDS] !== SEG_OWNED) continue;
			if ((s + 1) * segmentWords - ingestedTo[s] >= Math.max(minTail, Atomics.load(control, C_NEED_WORDS))) {
				compact(s);
				returned = true;
			}
		}
		return returned;
	};

	const freeSegment = () => {
		for (let s = 0; s < S; s++) if (table[s * SEG_FIELDS] === SEG_FREE) return true;
		return false;
	};

	const reclaim = () => {
		// wake a reader that idles because every row was already cached
		if (evictions > 0) {
			Atomics.add(control, C_EVICTED, evictions);
			Atomics.notify(control, C_EVICTED);
			evictions = 0;
		}
		if (Atomics.load(control, C_READER_WAITING) !== 1) return;
		// with every row fitting, room comes from tails; a free segment the reader has not taken yet is room too
		if (holdsAll && (returnTails() || freeSegment())) return;
		let freed = false;
		for (let s = 0; s < S; s++) {
			if (table[s * SEG_FIELDS] !== SEG_OWNED) continue;
			const used = ingestedTo[s] - s * segmentWords;
			if (used - liveWords[s] > segmentWords / 4 || (used > 0 && liveWords[s] === 0)) {
				compact(s);
				freed = true;
			}
		}
		if (freed) return;
		// the cache is full of informative rows: drop the oldest segment whole
		let oldest = -1;
		for (let s = 0; s < S; s++) if (table[s * SEG_FIELDS] === SEG_OWNED && (oldest < 0 || age[s] < age[oldest])) oldest = s;
		if (oldest < 0) return;
		let p = oldest * segmentWords;
		while (p < ingestedTo[oldest]) {
			if ((idx[p + 2] & FLAG_EVICTED) === 0) {
				removeAt(idx[p + 3]);
				evictedWithSegment++;
			}
			p += ROW_HEADER_WORDS + idx[p + 1];
		}
		compact(oldest);
	};

	const sweep = () => {
		for (let r = 0; r < R; r++) {
			const j = r + Math.floor(rng() * (R - r));
			const t = list[r];
			list[r] = list[j];
			list[j] = t;
			idx[list[r] + 3] = r;
			idx[list[j] + 3] = j;
		}
		let pgMax = -Infinity;
		let pgMin = Infinity;
		let newtonSteps = 0;
		for (let r = 0; r < R; r++) {
			const p = list[r];
			const gid = idx[p];
			const s = p + ROW_HEADER_WORDS;
			const e = s + idx[p + 1];
			const y = (idx[p + 2] & FLAG_NEGATIVE) !== 0 ? -1 : 1;
			const q = xsq[p + 4];
			let m = y * dot(w, idx, val, s, e);
			if (logistic) {
				const cv = comp as Float64Array;
				if (alpha[gid] === 0 && cv[gid] === C) {
					alpha[gid] = alphaStart;
					cv[gid] = C - alphaStart;
					axpy(alphaStart * y, idx, val, s, e, w);
					m += alphaStart * q;
				}
				const a = alpha[gid];
				newtonStep(q, m, a, cv[gid], C, innerEps, step);
				newtonSteps += step[2];
				alpha[gid] = step[0];
				cv[gid] = step[1];
				const da = step[0] - a;
				if (da !== 0) axpy(da * y, idx, val, s, e, w);
				margins[gid] = m + da * q;
				if (step[0] <= LOGISTIC_EVICT * C && margins[gid] > 0) evict[r] = 1;
				continue;
			}
			const a = alpha[gid];
			const G = m - 1 + diag * a;
			let PG = 0;
			if (a === 0) {
				if (G > pgMaxOld) {
					evict[r] = 1;
					margins[gid] = m;
					continue;
				}
				if (G < 0) PG = G;
			} else if (a === upper) {
				if (G < pgMinOld) {
					evict[r] = 1;
					margins[gid] = m;
					continue;
				}
				if (G > 0) PG = G;
			} else PG = G;
			if (PG > pgMax) pgMax = PG;
			if (PG < pgMin) pgMin = PG;
			if (PG > 1e-12 || PG < -1e-12) {
				let na = a - G / (q + diag);
				if (na < 0) na = 0;
				else if (na > upper) na = upper;
				alpha[gid] = na;
				const da = na - a;
				axpy(da * y, idx, val, s, e, w);
				margins[gid] = m + da * q;
			} else margins[gid] = m;
		}
		visits += R;
		if (logistic) {
			if (newtonSteps <= R / 10) innerEps = Math.max(1e-12, 0.1 * innerEps);
		} else {
			pgMaxOld = pgMax <= 0 ? Infinity : pgMax;
			pgMinOld = pgMin >= 0 ? -Infinity : pgMin;
		}
		// evict only when the reader needs room, and never from a cache that holds every row (nothing is re-read then)
		const pressure = !holdsAll && Atomics.load(control, C_READER_WAITING) === 1;
		for (let r = R - 1; r >= 0; r--) {
			if (evict[r] === 1) {
				evict[r] = 0;
				if (pressure) {
					removeAt(r);
					evictedByTest++;
				}
			}
		}
	};

	/** exact primal: from the cache when every row is resident, else pause the reader and make one sequential pass */
	const exactCheck = async () => {
		let lossSum = 0;
		let correct = 0;
		if (R === n) {
			meter.compute(() => {
				for (let r = 0; r < R; r++) {
					const p = list[r];
					const y = (idx[p + 2] & FLAG_NEGATIVE) !== 0 ? -1 : 1;
					const wx = dot(w, idx, val, p + ROW_HEADER_WORDS, p + ROW_HEADER_WORDS + idx[p + 1]);
					margins[idx[p]] = y * wx;
					lossSum += lossAt(o.loss, y * wx);
					if ((wx > 0 ? 1 : -1) === y) correct++;
				}
			});
			finishCheck(lossSum, correct);
			return;
		}
		Atomics.store(control, C_PAUSE, 1);
		await meter.read(async () => {
			for await (const v of readBinaryChunkViews(o.data, { chunkBytes, throttleMBps: o.diskMBps })) {
				let at = 0;
				for (let r = 0; r < v.rows; r++) {
					const len = v.lengths[r];
					const wx = dot(w, v.indices, v.values, at, at + len);
					const y = v.labels[r];
					margins[v.firstRow + r] = y * wx;
					lossSum += lossAt(o.loss, y * wx);
					if ((wx > 0 ? 1 : -1) === y) correct++;
					at += len;
				}
			}
		});
		Atomics.store(control, C_PAUSE, 0);
		Atomics.notify(control, C_PAUSE);
		checkPasses++;
		finishCheck(lossSum, correct);
	};
	const finishCheck = (lossSum: number, correct: number) => {
		primal = primalFrom(w, C, lossSum);
		dual = dualFrom(o.loss, C, w, alpha, comp);
		gap = relativeGap(primal, dual);
		accuracy = correct / n;
		meter.trace.push({ seconds: meter.seconds(), gap });
	};

	const trainStart = performance.now();
	try {
		while (visits < o.maxEpochs * n) {
			if (Atomics.load(control, C_ERROR) === 1) break;
			ingest();
			if (R === 0) {
				Atomics.store(control, C_TRAINER_HUNGRY, 1);
				Atomics.wait(control, C_PUBLISHED, Atomics.load(control, C_PUBLISHED), 20);
				continue;
			}
			Atomics.store(control, C_TRAINER_HUNGRY, 0);
			meter.compute(sweep);
			meter.compute(reclaim);
			const passes = Atomics.load(control, C_PASSES);
			// once per reader pass, or per n visits while the reader idles with everything cached
			if (passes > lastEstimatePass || visits - lastEstimateVisits >= n) {
				lastEstimatePass = passes;
				lastEstimateVisits = visits;
				estimates++;
				const estimate = relativeGap(primalFrom(w, C, lossSumOfMargins(o.loss, margins)), dualFrom(o.loss, C, w, alpha, comp));
				meter.trace.push({ seconds: meter.seconds(), gap: estimate });
				o.onProgress?.({ seconds: meter.seconds(), gap: estimate, epochs: visits / n });
				// a check from the cache (every row resident) costs less than a sweep: no backing off then.
				// Not before the reader's first pass ends: rows not yet delivered were never optimised, and a
				// check then costs a pass of its own while the reader is still bringing them. A cache that holds
				// every row waits for the last published rows to be taken in (the reader counts its pass just
				// after publishing them), so its check always reads the cache.
				if (estimate <= o.tol && passes >= 1 && (R === n || (!holdsAll && estimates >= nextCheckAt))) {
					await exactCheck();
					if (gap <= o.tol) {
						converged = true;
						break;
					}
					checkWait = Math.min(8, checkWait * 2);
					nextCheckAt = estimates + checkWait;
					pgMaxOld = Infinity;
					pgMinOld = -Infinity;
				}
			}
		}
	} finally {
		Atomics.store(control, C_STOP, 1);
		Atomics.store(control, C_PAUSE, 0);
		Atomics.notify(control, C_FREED);
		Atomics.notify(control, C_PAUSE);
	}
	const trainSeconds = (performance.now() - trainStart) / 1000;
	const result = await finished;
	await worker.terminate();
	readerError = result.error;
	if (readerError !== undefined || Atomics.load(control, C_ERROR) === 1) throw new Error(`stream reader: ${readerError ?? 'failed'}`);
	if (o.onRead) for (let i = 0; i < result.reads.length; i += 3) o.onRead(result.reads[i], result.reads[i + 1], result.reads[i + 2]);
	const readerPasses = Atomics.load(control, C_PASSES);
	const readerMs = stats[1];
	if (!converged) await exactCheck();
	return {
		strategy: 'stream',
		loss: o.loss,
		C,
		primal,
		dual,
		gap,
		epochs: visits / n,
		// passes the reader started (a partial last pass counts) plus the checking passes
		passes: readerPasses + (stats[0] > readerPasses * (h.indexOffset - h.headerBytes) ? 1 : 0) + checkPasses,
		updates: visits,
		cacheHitRate: hitRate(meter.exampleReads, visits),
		readSeconds: (readerMs + meter.readMs) / 1000,
		computeSeconds: meter.computeMs / 1000,
		wallSeconds: meter.seconds(),
		peakMemoryBytes: meter.peakBytes,
		accuracy,
		outerIterations: 0,
		trace: meter.trace,
		cacheBytes,
		peakResidentBytes: peakResidentWords * (real ? 8 : 4),
		readerMBps: trainSeconds > 0 ? stats[0] / 1e6 / trainSeconds : 0,
		readerBusyMBps: readerMs > 0 ? stats[0] / 1e3 / readerMs : 0,
		evicted: { byTest: evictedByTest, withSegment: evictedWithSegment },
		...(o.keepWeights ? { w } : {})
	};
}
