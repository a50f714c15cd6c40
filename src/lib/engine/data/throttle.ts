/**
 * Reader byte-rate throttle (1 MB = 1e6 bytes).
 *
 * Why: a calibration reads files that sit in the page cache, so reads run at memory
 * speed; to emulate a slower target disk the reader must be held to that disk's rate.
 *
 * Model: the emulated disk delivers one read of `bytes` in bytes / rate seconds and reads
 * one request ahead: the transfer for a read starts when the previous transfer ended, but not
 * before the previous read was requested (readahead is triggered by consumption). A reader
 * that works slower than the disk is therefore never slowed; one that works faster runs at
 * the disk's rate. Idle time is never banked beyond that one read.
 *
 * Every wait is served, however short: a read of a few kilobytes at hundreds of MB/s lasts well
 * under a millisecond, and rounding such waits away let small block files (a calibration's) read at
 * half their set rate while the larger ones of a full-size run read near it.
 */

export interface ThrottleClock {
	/** milliseconds, monotonic */
	now(): number;
	sleep(ms: number): Promise<void>;
}

/** Timers wake a millisecond or so late and cannot wait less than one: the last stretch is waited by blocking. */
const TIMER_SLACK_MS = 2;
/** made on first use, so importing this module never needs SharedArrayBuffer */
let parked: Int32Array | undefined;

export const realClock: ThrottleClock = {
	now: () => performance.now(),
	sleep: async (ms) => {
		const end = performance.now() + ms;
		if (ms > TIMER_SLACK_MS) await new Promise((resolve) => setTimeout(resolve, ms - TIMER_SLACK_MS));
		const left = end - performance.now();
		// blocks this thread (the reader's) for at most the slack, without spinning a core
		if (left > 0) Atomics.wait((parked ??= new Int32Array(new SharedArrayBuffer(4))), 0, 0, left);
	}
};

export class Throttle {
	/** bytes per millisecond; 0 = unthrottled */
	private readonly bytesPerMs: number;
	/** time (ms) at which the emulated disk finishes the transfers taken so far */
	private busyUntil = -Infinity;
	/** time (ms) of the previous request, which triggered the current readahead */
	private lastRequest = Infinity;

	constructor(
		mbPerSecond?: number,
		private readonly clock: ThrottleClock = realClock
	) {
		if (mbPerSecond !== undefined && !(mbPerSecond > 0 && Number.isFinite(mbPerSecond))) {
			throw new RangeError(`throttle rate must be a positive number of MB/s, got ${mbPerSecond}`);
		}
		this.bytesPerMs = mbPerSecond ? (mbPerSecond * 1e6) / 1000 : 0;
	}

	get limited(): boolean {
		return this.bytesPerMs > 0;
	}

	/** Wait until the emulated disk would have delivered `bytes` more. */
	async take(bytes: number): Promise<void> {
		if (this.bytesPerMs === 0 || bytes <= 0) return;
		const now = this.clock.now();
		this.busyUntil = Math.max(this.busyUntil, Math.min(this.lastRequest, now)) + bytes / this.bytesPerMs;
		this.lastRequest = now;
		const wait = this.busyUntil - now;
		if (wait > 0) await this.clock.sleep(wait);
	}
}
