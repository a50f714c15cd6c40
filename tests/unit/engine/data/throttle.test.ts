import { describe, expect, it } from 'vitest';
import { realClock, Throttle, type ThrottleClock } from '../../../../src/lib/engine/data/throttle.js';

/** A clock that only moves when the throttle sleeps or the test says so. */
function fakeClock() {
	const sleeps: number[] = [];
	let t = 1000;
	const clock: ThrottleClock & { sleeps: number[]; advance(ms: number): void } = {
		sleeps,
		now: () => t,
		sleep: async (ms) => {
			sleeps.push(ms);
			t += ms;
		},
		advance: (ms) => {
			t += ms;
		}
	};
	return clock;
}

// Arithmetic of the rate (1 MB = 1e6 bytes, the SI megabyte): 10 MB/s moves 10 000 bytes per ms.
describe('reader throttle', () => {
	it('sleeps bytes / rate for back-to-back reads', async () => {
		const clock = fakeClock();
		const th = new Throttle(10, clock);
		for (let i = 0; i < 4; i++) await th.take(1_000_000);
		expect(clock.sleeps).toEqual([100, 100, 100, 100]);
		expect(clock.now()).toBe(1400);
	});

	it('does not slow a reader that is already slower than the disk', async () => {
		const clock = fakeClock();
		const th = new Throttle(10, clock);
		await th.take(1_000_000);
		clock.advance(250);
		await th.take(1_000_000);
		clock.advance(250);
		await th.take(1_000_000);
		// the disk read ahead while the reader worked, so only the first read waited
		expect(clock.sleeps).toEqual([100]);
	});

	it('overlaps transfer with the reader’s own work', async () => {
		const clock = fakeClock();
		const th = new Throttle(10, clock);
		await th.take(1_000_000);
		for (let i = 0; i < 3; i++) {
			clock.advance(60);
			await th.take(1_000_000);
		}
		// each read after the first was fetched during the reader's 60 ms of work: 40 ms remain
		expect(clock.sleeps).toEqual([100, 40, 40, 40]);
		expect(clock.now()).toBe(1400);
	});

	it('serves sub-millisecond waits too, so small reads keep the set rate', async () => {
		const clock = fakeClock();
		const th = new Throttle(100, clock);
		// 10 kB at 100 MB/s = 0.1 ms each
		for (let i = 0; i < 8; i++) await th.take(10_000);
		expect(clock.sleeps.length).toBe(8);
		for (const ms of clock.sleeps) expect(ms).toBeCloseTo(0.1, 9);
		expect(clock.now()).toBeCloseTo(1000.8, 9);
	});

	it('the real clock serves sub-millisecond waits instead of rounding them away', async () => {
		// 200 waits of 0.25 ms last at least 50 ms; only the lower bound is asserted (a wait cannot end early,
		// while a loaded machine may end it late)
		const start = performance.now();
		for (let i = 0; i < 200; i++) await realClock.sleep(0.25);
		expect(performance.now() - start).toBeGreaterThanOrEqual(50);
	});

	it('the long-run rate matches the setting', async () => {
		const clock = fakeClock();
		const th = new Throttle(250, clock);
		const start = clock.now();
		for (let i = 0; i < 1000; i++) await th.take(8 << 20);
		const mbps = (1000 * (8 << 20)) / 1e6 / ((clock.now() - start) / 1000);
		expect(mbps).toBeCloseTo(250, 6);
	});

	it('unthrottled never sleeps; a bad rate is refused', async () => {
		const clock = fakeClock();
		await new Throttle(undefined, clock).take(1e9);
		expect(clock.sleeps).toEqual([]);
		expect(() => new Throttle(0)).toThrow('throttle rate must be a positive number of MB/s, got 0');
		expect(() => new Throttle(-5)).toThrow('got -5');
	});
});
