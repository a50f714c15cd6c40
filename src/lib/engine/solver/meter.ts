/** Time and memory bookkeeping shared by the strategies: read and compute seconds, counted peak bytes. */

export class Meter {
	readonly t0 = performance.now();
	readMs = 0;
	computeMs = 0;
	peakBytes = 0;
	/** example reads from disk that fed the trainer, and trainer visits (for cacheHitRate) */
	exampleReads = 0;
	passes = 0;
	trace: { seconds: number; gap: number }[] = [];

	seconds(): number {
		return (performance.now() - this.t0) / 1000;
	}

	async read<T>(f: () => Promise<T>): Promise<T> {
		const t = performance.now();
		try {
			return await f();
		} finally {
			this.readMs += performance.now() - t;
		}
	}

	compute<T>(f: () => T): T {
		const t = performance.now();
		try {
			return f();
		} finally {
			this.computeMs += performance.now() - t;
		}
	}

	/** note bytes held right now; keeps the largest */
	hold(bytes: number): void {
		if (bytes > this.peakBytes) this.peakBytes = bytes;
	}
}

/** 1 − reads/visits, clamped to [0, 1]; 0 when the trainer made no visits. */
export function hitRate(reads: number, visits: number): number {
	return visits > 0 ? Math.min(1, Math.max(0, 1 - reads / visits)) : 0;
}

/** Bytes of the state every strategy keeps for all n examples: w (8d), α (8n), C − α for logistic (8n), and optionally the margin log (8n). */
export function stateBytes(n: number, d: number, logistic: boolean, marginLog: boolean): number {
	return 8 * d + 8 * n * (1 + (logistic ? 1 : 0) + (marginLog ? 1 : 0));
}
