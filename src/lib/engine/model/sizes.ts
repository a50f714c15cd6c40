/**
 * Bytes a dataset takes on disk and in RAM, and the RAM a machine leaves for training.
 * Binary sizes follow the Loadline binary row format (data/binary.ts); text sizes are
 * svmlight rows ("+1 12:0.5 …\n").
 */
import type { Dataset } from '../../schemas/plan.js';
import { workingSetBytes } from '../solver/rows.js';
import { stateBytes } from '../solver/meter.js';
import { memoryStateBytes } from '../solver/strategy-memory.js';
import { streamCacheBytes } from '../solver/stream-cache.js';

export const GiB = 1024 ** 3;
/** rows per chunk record in binary files the engine writes */
const CHUNK_ROWS = 1024;
/** chunk record header (rows, nnz) + chunk index entry (offset, first row) */
const CHUNK_OVERHEAD = 8 + 16;
const FILE_HEADER = 64;
/** characters of a real value in text rows: the generator writes whole thousandths such as "0.137" */
const REAL_VALUE_CHARS = 5;
/** compressed size over raw size (common practice, no source: gzip on sparse numeric text ≈ 0.3, on binary indices ≈ 0.5) */
const COMPRESSION_RATIO = { text: 0.3, binary: 0.5 } as const;

/** Bytes of n rows in the binary row format. */
export function binaryBytes(rows: number, nnzPerRow: number, valueKind: Dataset['valueKind']): number {
	const chunks = Math.ceil(rows / CHUNK_ROWS);
	const perNnz = valueKind === 'real' ? 8 : 4;
	// per row: label byte (padded to 4 per chunk) + row length u32
	return FILE_HEADER + chunks * (CHUNK_OVERHEAD + 3) + rows * 5 + rows * nnzPerRow * perNnz;
}

/** Mean decimal digits of a feature index drawn uniformly from 1..d. */
export function meanIndexDigits(d: number): number {
	let total = 0;
	for (let lo = 1, digits = 1; lo <= d; lo *= 10, digits++) total += (Math.min(d, lo * 10 - 1) - lo + 1) * digits;
	return total / d;
}

/** Bytes of n svmlight text rows: label, then " index:value" per nonzero, then a newline. */
export function textBytes(rows: number, features: number, nnzPerRow: number, valueKind: Dataset['valueKind'], positiveFraction = 0.5): number {
	const label = 2 * positiveFraction + 2 * (1 - positiveFraction); // "+1" or "-1"
	const perNnz = 1 + meanIndexDigits(features) + 1 + (valueKind === 'real' ? REAL_VALUE_CHARS : 1);
	return rows * (label + nnzPerRow * perNnz + 1);
}

/** Bytes on disk as the plan states them, or derived from the format. */
export function bytesOnDisk(ds: Dataset): number {
	if (ds.bytesOnDisk !== undefined) return ds.bytesOnDisk;
	const raw = ds.format === 'text' ? textBytes(ds.rows, ds.features, ds.nnzPerRow, ds.valueKind, ds.positiveFraction) : binaryBytes(ds.rows, ds.nnzPerRow, ds.valueKind);
	return Math.ceil(ds.compressed ? raw * COMPRESSION_RATIO[ds.format] : raw);
}

/** Bytes of rows held in RAM as the solver holds them (solver/rows.ts). */
export function rowsInRamBytes(rows: number, nnzPerRow: number, valueKind: Dataset['valueKind']): number {
	return workingSetBytes(rows, rows * nnzPerRow, valueKind === 'real');
}

/**
 * Bytes a strategy needs to hold every row at once: the solver's rows (memory, block, selective)
 * or the stream cache's row records (solver/stream-cache.ts), which carry a longer header per row.
 */
export function cachedRowsBytes(strategy: 'memory' | 'block' | 'selective' | 'stream', rows: number, nnzPerRow: number, valueKind: Dataset['valueKind']): number {
	return strategy === 'stream' ? streamCacheBytes(rows, rows * nnzPerRow, valueKind === 'real') : rowsInRamBytes(rows, nnzPerRow, valueKind);
}

/** Weight vector w: d float64. */
export const weightBytes = (features: number) => features * 8;
/** Weights w (8d) and dual variables α (8n; logistic keeps C − α too), as the solver counts them. */
export const stateBytesFor = (rows: number, features: number, logistic: boolean) => stateBytes(rows, features, logistic, false);

/** RAM held back for the operating system and the runtime: 10 % of RAM, at least 0.5 GiB (common practice, no source). */
export function osReserveBytes(ramBytes: number): number {
	return Math.max(0.5 * GiB, 0.1 * ramBytes);
}

/** RAM the training process may use. */
export function usableRamBytes(ramGiB: number): number {
	const ram = ramGiB * GiB;
	return Math.max(0, ram - osReserveBytes(ram));
}

/** "41.2 GiB" style. */
export function formatBytes(bytes: number): string {
	const units = ['B', 'KiB', 'MiB', 'GiB', 'TiB', 'PiB'];
	let x = bytes;
	let u = 0;
	while (Math.abs(x) >= 1024 && u < units.length - 1) {
		x /= 1024;
		u++;
	}
	return `${u === 0 ? x.toFixed(0) : x.toFixed(1)} ${units[u]}`;
}

/** One of the two read buffers a strategy's reader keeps (one read ahead): budget/div, 64 KiB to 8 MiB. */
const readBuffer = (memoryBytes: number, div: number) => Math.max(64 * 1024, Math.min(8 << 20, Math.floor(memoryBytes / div)));

/**
 * What the engine counts for a strategy besides the rows in its budget (mirrors solver/strategy-*.ts):
 * w and α, two read buffers, plus the margin log (8n) of block, selective and stream; block's
 * per-example solver state (12n), selective's cache flag and stream's resident flag (1n).
 */
export function engineStateBytes(strategy: 'memory' | 'block' | 'selective' | 'stream', rows: number, features: number, logistic: boolean, memoryBytes = Infinity): number {
	if (strategy === 'memory') return memoryStateBytes(rows, features, logistic);
	const state = stateBytes(rows, features, logistic, true);
	if (strategy === 'block') return state + 12 * rows + 2 * readBuffer(memoryBytes, 32);
	if (strategy === 'selective') return state + rows + 2 * readBuffer(memoryBytes, 32);
	return state + rows + 2 * readBuffer(memoryBytes, 16) + 1024;
}

/** The memory budget that leaves `rowBytes` for rows after the engine's own state (stream's buffers grow with the budget). */
export function budgetForRows(strategy: 'memory' | 'block' | 'selective' | 'stream', rows: number, features: number, logistic: boolean, rowBytes: number): number {
	let budget = engineStateBytes(strategy, rows, features, logistic, 0) + rowBytes;
	for (let i = 0; i < 4; i++) budget = engineStateBytes(strategy, rows, features, logistic, budget) + rowBytes;
	return Math.ceil(budget);
}
