/** Number formatting for the UI: durations, bytes, money, shares. */

export function duration(seconds: number | null | undefined): string {
	if (seconds === null || seconds === undefined || !Number.isFinite(seconds)) return '—';
	if (seconds < 1) return `${(seconds * 1000).toFixed(0)} ms`;
	if (seconds < 90) return `${seconds.toFixed(seconds < 10 ? 1 : 0)} s`;
	if (seconds < 5400) return `${(seconds / 60).toFixed(0)} min`;
	if (seconds < 172_800) return `${(seconds / 3600).toFixed(seconds < 36_000 ? 1 : 0)} h`;
	if (seconds < 3_153_600_000) return `${(seconds / 86_400).toFixed(0)} days`;
	return `${(seconds / 31_536_000).toExponential(1)} years`;
}

export function range(r: { p10: number; p50: number; p90: number } | null | undefined): string {
	return r ? `${duration(r.p10)} – ${duration(r.p90)}` : '—';
}

export function bytes(b: number | null | undefined): string {
	if (b === null || b === undefined || !Number.isFinite(b)) return '—';
	const units = ['B', 'KiB', 'MiB', 'GiB', 'TiB', 'PiB'];
	let v = b;
	let i = 0;
	while (v >= 1024 && i < units.length - 1) {
		v /= 1024;
		i++;
	}
	return `${v.toFixed(v < 10 && i > 0 ? 1 : 0)} ${units[i]}`;
}

export function money(x: number | null | undefined): string {
	if (x === null || x === undefined || !Number.isFinite(x)) return '—';
	return x < 1 ? `$${x.toFixed(2)}` : x < 10_000 ? `$${x.toFixed(x < 100 ? 2 : 0)}` : `$${Math.round(x).toLocaleString('en-US')}`;
}

export function percent(x: number | null | undefined): string {
	return x === null || x === undefined || !Number.isFinite(x) ? '—' : `${(x * 100).toFixed(x > 0.999 && x < 1 ? 1 : 0)} %`;
}

export function passes(x: number): string {
	return x < 10 ? x.toFixed(1) : x < 1e6 ? Math.round(x).toLocaleString('en-US') : x.toExponential(1);
}

export const STRATEGY_LABEL: Record<string, string> = {
	memory: 'All in memory',
	block: 'Block minimization',
	selective: 'Selective block minimization',
	stream: 'Streaming cache'
};

export const STRATEGY_COLOR: Record<string, string> = {
	memory: '#12355b',
	block: '#c8553d',
	selective: '#2a9d8f',
	stream: '#f2a541'
};

export const VERDICT_STYLE: Record<string, string> = {
	meets: 'bg-ok/15 text-ok',
	'at risk': 'bg-signal/20 text-ink',
	misses: 'bg-bad/15 text-bad'
};
