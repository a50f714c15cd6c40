/**
 * Shared-memory layout of the stream strategy's example cache, used by the reader thread and
 * the trainer. The cache is S equal segments of 32-bit words in SharedArrayBuffers; the reader
 * fills a free segment with whole rows and publishes it, the trainer ingests published segments,
 * evicts rows, compacts segments in place and hands them back. Only the segment table (state,
 * fill range) changes under the lock; row words belong to whoever owns the segment.
 *
 * Row record at word p (indices view `idx`, values view `val` at the same word positions):
 *   idx[p]   global row id            idx[p+1] nnz
 *   idx[p+2] flags (bit 0: label −1, bit 1: evicted)
 *   idx[p+3] trainer's resident-list position    f32 at p+4: ‖x‖²
 *   idx[p+5 .. p+5+nnz) feature indices, val[p+5 .. p+5+nnz) values (real data only)
 */

export const ROW_HEADER_WORDS = 5;
export const FLAG_NEGATIVE = 1;
export const FLAG_EVICTED = 2;

/**
 * Cache bytes per 32-bit word of a row record: its index word, its value word (real data), and the
 * trainer's resident list and eviction mark (5 bytes per row) spread over the words of the shortest row.
 */
export const cacheBytesPerWord = (real: boolean) => 4 + (real ? 4 : 0) + 5 / (ROW_HEADER_WORDS + 1);

/**
 * Cache bytes that hold `rows` rows of `nnz` nonzeros in all, in `segments` segments: the row
 * records plus, per segment, the unused tail a row too long for it leaves (up to a row of 4× the mean).
 */
export function streamCacheBytes(rows: number, nnz: number, real: boolean, segments = 16): number {
	const meanWords = ROW_HEADER_WORDS + nnz / Math.max(1, rows);
	return (rows * ROW_HEADER_WORDS + nnz + segments * 4 * meanWords) * cacheBytesPerWord(real);
}

/** control words */
export const C_LOCK = 0;
/** bumped whenever a segment is handed back to the reader */
export const C_FREED = 1;
/** bumped whenever the reader publishes a segment */
export const C_PUBLISHED = 2;
export const C_STOP = 3;
export const C_PAUSE = 4;
/** reader passes completed */
export const C_PASSES = 5;
/** 1 while the reader waits for a free segment */
export const C_READER_WAITING = 6;
export const C_ERROR = 7;
/** 1 once the reader has paused (acknowledges C_PAUSE) */
export const C_PAUSED = 8;
/** 1 while the trainer has no rows and waits for the reader */
export const C_TRAINER_HUNGRY = 9;
/** bumped by the trainer after evictions (a reader idling on a fully cached file wakes up) */
export const C_EVICTED = 10;
/** words of the row the reader waits to place (the trainer hands back only tails that hold it) */
export const C_NEED_WORDS = 11;
export const CONTROL_WORDS = 16;

/** segment states */
export const SEG_FREE = 0;
export const SEG_FILLING = 1;
export const SEG_READY = 2;
export const SEG_OWNED = 3;
/** segment table: state, fill start, fill end (words, absolute) per segment */
export const SEG_FIELDS = 3;

export interface CacheLayout {
	segments: number;
	segmentWords: number;
	real: boolean;
}

export interface SharedCache {
	layout: CacheLayout;
	control: Int32Array;
	table: Int32Array;
	idx: Uint32Array;
	xsq: Float32Array;
	val: Float32Array | null;
	/** 1 while a row is in the cache or on its way (the reader skips those) */
	inCache: Uint8Array;
	/** reader statistics: [bytes read, ms spent reading (throttle included), rows inserted] */
	stats: Float64Array;
}

export interface SharedBuffers {
	layout: CacheLayout;
	control: SharedArrayBuffer;
	table: SharedArrayBuffer;
	idx: SharedArrayBuffer;
	val: SharedArrayBuffer | null;
	inCache: SharedArrayBuffer;
	stats: SharedArrayBuffer;
}

export function allocateCache(layout: CacheLayout, n: number): SharedBuffers {
	const words = layout.segments * layout.segmentWords;
	return {
		layout,
		control: new SharedArrayBuffer(4 * CONTROL_WORDS),
		table: new SharedArrayBuffer(4 * SEG_FIELDS * layout.segments),
		idx: new SharedArrayBuffer(4 * words),
		val: layout.real ? new SharedArrayBuffer(4 * words) : null,
		inCache: new SharedArrayBuffer(Math.max(1, n)),
		stats: new SharedArrayBuffer(8 * 4)
	};
}

export function viewCache(b: SharedBuffers): SharedCache {
	return {
		layout: b.layout,
		control: new Int32Array(b.control),
		table: new Int32Array(b.table),
		idx: new Uint32Array(b.idx),
		xsq: new Float32Array(b.idx),
		val: b.val ? new Float32Array(b.val) : null,
		inCache: new Uint8Array(b.inCache),
		stats: new Float64Array(b.stats)
	};
}

/** Bytes of the shared buffers (what the cache holds resident). */
export function sharedBytes(b: SharedBuffers): number {
	return b.control.byteLength + b.table.byteLength + b.idx.byteLength + (b.val ? b.val.byteLength : 0) + b.inCache.byteLength + b.stats.byteLength;
}

/** Spin briefly, then sleep on the lock word; held only for segment-table updates. */
export function lock(control: Int32Array): void {
	for (let spins = 0; ; spins++) {
		if (Atomics.compareExchange(control, C_LOCK, 0, 1) === 0) return;
		if (spins > 100) Atomics.wait(control, C_LOCK, 1, 1);
	}
}

export function unlock(control: Int32Array): void {
	Atomics.store(control, C_LOCK, 0);
	Atomics.notify(control, C_LOCK, 1);
}
