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
 */

export interface ThrottleClock {
	/** milliseconds, monotonic */
	now(): number;
	sleep(ms: number): Promise<void>;
}

export const realClock: ThrottleClock = {
	now: () => performance.now(),
	sleep: (ms) => new Promise((resolve) => setTimeout(resolve, ms))
};

/** Sleeps shorter than this are carried as debt: timers cannot wait less than about 1 ms. */
const MIN_SLEEP_MS = 1;

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
		if (wait >= MIN_SLEEP_MS) await this.clock.sleep(wait);
	}
}
