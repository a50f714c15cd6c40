/**
 * Reader thread of the stream strategy: reads the binary row file strictly sequentially in large
 * chunks (through the disk throttle), decodes each row not already cached into a free cache
 * segment, publishes full segments, and wraps to the start of the file for the next pass.
 * Runs in a worker thread (started through stream-reader-boot.mjs); talks to the trainer only
 * through the shared cache, and posts its read log and any error when it ends.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { readBinaryChunkViews } from '../data/binary.js';
import {
	C_ERROR,
	C_EVICTED,
	C_FREED,
	C_NEED_WORDS,
	C_PASSES,
	C_PAUSE,
	C_PAUSED,
	C_PUBLISHED,
	C_READER_WAITING,
	C_STOP,
	C_TRAINER_HUNGRY,
	FLAG_NEGATIVE,
	ROW_HEADER_WORDS,
	SEG_FIELDS,
	SEG_FILLING,
	SEG_FREE,
	SEG_READY,
	lock,
	unlock,
	viewCache,
	type SharedBuffers
} from './stream-cache.js';

/** rows up to this many nonzeros are copied element by element */
const SHORT_ROW = 64;

export interface ReaderData {
	path: string;
	buffers: SharedBuffers;
	chunkBytes: number;
	diskMBps: number | undefined;
	/** rows in the file: a pass is skipped while every one of them is resident */
	rows: number;
	/** keep a log of every read (pass, offset, bytes) for tests */
	logReads: boolean;
}

export interface ReaderResult {
	error?: string;
	reads: number[];
}

async function run(data: ReaderData): Promise<ReaderResult> {
	const cache = viewCache(data.buffers);
	const { control, table, idx, xsq, val, inCache, stats } = cache;
	const { segmentWords } = cache.layout;
	const reads: number[] = [];
	let pass = 0;
	let seg = -1;
	let pos = 0;
	let segEnd = 0;
	let published = 0;
	const stopped = () => Atomics.load(control, C_STOP) === 1;

	const publish = () => {
		if (seg < 0) return;
		lock(control);
		table[seg * SEG_FIELDS + 2] = pos;
		table[seg * SEG_FIELDS] = SEG_READY;
		unlock(control);
		Atomics.add(control, C_PUBLISHED, 1);
		Atomics.notify(control, C_PUBLISHED);
		seg = -1;
		published++;
	};
	/** claim a free segment, waiting for the trainer to hand one back; false when told to stop */
	const acquire = (): boolean => {
		for (;;) {
			if (stopped()) return false;
			lock(control);
			const S = cache.layout.segments;
			// the free segment with the most room: a handed-back tail only when nothing emptier is free
			let best = -1;
			for (let s = 0; s < S; s++) {
				if (table[s * SEG_FIELDS] === SEG_FREE && (best < 0 || table[s * SEG_FIELDS + 1] - s * segmentWords < table[best * SEG_FIELDS + 1] - best * segmentWords)) best = s;
			}
			if (best >= 0) {
				table[best * SEG_FIELDS] = SEG_FILLING;
				unlock(control);
				seg = best;
				pos = table[best * SEG_FIELDS + 1];
				segEnd = (best + 1) * segmentWords;
				Atomics.store(control, C_READER_WAITING, 0);
				return true;
			}
			const freed = Atomics.load(control, C_FREED);
			Atomics.store(control, C_READER_WAITING, 1);
			unlock(control);
			Atomics.wait(control, C_FREED, freed, 20);
		}
	};
	const waitWhilePaused = () => {
		while (Atomics.load(control, C_PAUSE) === 1 && !stopped()) {
			Atomics.store(control, C_PAUSED, 1);
			Atomics.wait(control, C_PAUSE, 1, 20);
		}
		Atomics.store(control, C_PAUSED, 0);
	};

	/** rows inserted minus rows the trainer reported evicted (the report lags, so this may overstate) */
	const resident = () => stats[2] - Atomics.load(control, C_EVICTED);
	for (;;) {
		// every row resident: reading the file again would insert nothing, so wait for evictions first
		while (!stopped() && resident() >= data.rows) {
			const evicted = Atomics.load(control, C_EVICTED);
			if (resident() >= data.rows) Atomics.wait(control, C_EVICTED, evicted, 20);
		}
		if (stopped()) return { reads };
		const insertedBefore = stats[2];
		const evictedBefore = Atomics.load(control, C_EVICTED);
		let t = performance.now();
		for await (const view of readBinaryChunkViews(data.path, {
			chunkBytes: data.chunkBytes,
			throttleMBps: data.diskMBps,
			onRead: (offset, bytes) => {
				stats[0] += bytes;
				if (data.logReads) reads.push(pass, offset, bytes);
			}
		})) {
			stats[1] += performance.now() - t;
			let p = 0;
			// the chunk's arrays in locals, and short rows copied by a loop: a subarray per row costs an allocation
			const { lengths, labels, indices, values, firstRow } = view;
			const copyValues = val !== null && values !== null;
			for (let r = 0; r < view.rows; r++) {
				const len = lengths[r];
				const gid = firstRow + r;
				if (Atomics.load(inCache, gid) === 0) {
					const words = ROW_HEADER_WORDS + len;
					if (seg < 0 || pos + words > segEnd) {
						publish();
						Atomics.store(control, C_NEED_WORDS, words);
						for (;;) {
							if (!acquire()) return { reads };
							if (pos + words <= segEnd) break;
							if (pos === seg * segmentWords) throw new Error(`row ${gid} (${len} nonzeros) does not fit one cache segment of ${segmentWords} words; raise memoryBytes or lower segments`);
							// a handed-back tail too short for this row goes back unchanged
							publish();
						}
					}
					idx[pos] = gid;
					idx[pos + 1] = len;
					idx[pos + 2] = labels[r] < 0 ? FLAG_NEGATIVE : 0;
					idx[pos + 3] = 0;
					const s = pos + ROW_HEADER_WORDS;
					if (len <= SHORT_ROW) for (let j = 0; j < len; j++) idx[s + j] = indices[p + j];
					else idx.set(indices.subarray(p, p + len), s);
					let sq = len;
					if (copyValues) {
						sq = 0;
						for (let j = 0; j < len; j++) {
							const x = values![p + j];
							val![s + j] = x;
							sq += x * x;
						}
					}
					xsq[pos + 4] = sq;
					Atomics.store(inCache, gid, 1);
					pos += words;
					stats[2]++;
				}
				p += len;
			}
			// hand over what is filled so the trainer never waits on a half-full segment for long
			if (seg >= 0 && (published === 0 || Atomics.load(control, C_TRAINER_HUNGRY) === 1)) publish();
			if (stopped()) return { reads };
			waitWhilePaused();
			t = performance.now();
		}
		publish();
		pass++;
		Atomics.add(control, C_PASSES, 1);
		Atomics.notify(control, C_PUBLISHED);
		// a pass that found every row cached: read again only once the trainer has evicted some
		if (stats[2] === insertedBefore) {
			while (!stopped() && Atomics.load(control, C_EVICTED) === evictedBefore) Atomics.wait(control, C_EVICTED, evictedBefore, 20);
		}
		if (stopped()) return { reads };
	}
}

const data = workerData as ReaderData;
run(data).then(
	(result) => parentPort?.postMessage(result),
	(err: unknown) => {
		const control = new Int32Array(data.buffers.control);
		Atomics.store(control, C_ERROR, 1);
		Atomics.notify(control, C_PUBLISHED);
		parentPort?.postMessage({ error: err instanceof Error ? err.message : String(err), reads: [] } satisfies ReaderResult);
	}
);
