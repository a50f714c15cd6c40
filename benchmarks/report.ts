/** Small helpers the model benchmarks share (validate, rescore, backtest). */

export function median(xs: number[]): number {
	const s = [...xs].sort((a, b) => a - b);
	const m = s.length >> 1;
	return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** A reader that stops early (`| head`) is not an error: end quietly instead of printing EPIPE. */
export function endQuietlyOnClosedPipe(): void {
	process.stdout.on('error', (e: NodeJS.ErrnoException) => {
		if (e.code === 'EPIPE') process.exit(0);
		throw e;
	});
}
