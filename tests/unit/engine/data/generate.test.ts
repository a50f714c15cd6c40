import { afterAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { generateRows, generateToFile, resolveGenerateOptions, GenerateOptionError, type GenerateOptions } from '../../../../src/lib/engine/data/generate.js';
import { loadBinary, readBinaryHeader } from '../../../../src/lib/engine/data/binary.js';
import { loadSvmlight } from '../../../../src/lib/engine/data/svmlight.js';
import { convertSvmlightToBinary } from '../../../../src/lib/engine/data/convert.js';
import { profileFile } from '../../../../src/lib/engine/data/profile.js';
import type { SparseRows } from '../../../../src/lib/engine/types.js';

const dir = mkdtempSync(join(tmpdir(), 'loadline-gen-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function positives(s: SparseRows): number {
	let p = 0;
	for (let i = 0; i < s.n; i++) if (s.labels[i] > 0) p++;
	return p / s.n;
}

const bytesOf = (a: ArrayBufferView | null) => (a ? Buffer.from(a.buffer, a.byteOffset, a.byteLength) : null);

/** Byte-equal arrays (toEqual on millions of elements is slow). */
function sameRows(a: SparseRows, b: SparseRows) {
	expect(a.n).toBe(b.n);
	for (const key of ['labels', 'rowPtr', 'indices', 'values'] as const) {
		const x = bytesOf(a[key]);
		const y = bytesOf(b[key]);
		expect(x === null ? x : x.equals(y!), key).toBe(x === null ? y : true);
	}
}

/** Least-squares slope of log(count) on log(rank) over ranks lo..hi of the observed feature counts. */
function popularitySlope(s: SparseRows, lo: number, hi: number): number {
	const counts = new Map<number, number>();
	for (let j = 0; j < s.indices.length; j++) counts.set(s.indices[j], (counts.get(s.indices[j]) ?? 0) + 1);
	const sorted = [...counts.values()].sort((x, y) => y - x);
	const xs: number[] = [];
	const ys: number[] = [];
	for (let r = lo; r <= hi; r++) {
		xs.push(Math.log(r));
		ys.push(Math.log(sorted[r - 1] ?? 1));
	}
	const mx = xs.reduce((a, b) => a + b) / xs.length;
	const my = ys.reduce((a, b) => a + b) / ys.length;
	let sxy = 0;
	let sxx = 0;
	for (let i = 0; i < xs.length; i++) {
		sxy += (xs[i] - mx) * (ys[i] - my);
		sxx += (xs[i] - mx) ** 2;
	}
	return sxy / sxx;
}

const base: Partial<GenerateOptions> = { rows: 20_000, features: 10_000, nnz: 20, seed: 11 };

describe('synthetic generator', () => {
	it('hits rows, mean nonzeros, spread and the positive fraction', () => {
		for (const positive of [0.2, 0.5, 0.8]) {
			const s = generateRows({ ...base, positive, nnzSpread: 0.5 });
			expect(s.n).toBe(20_000);
			const lengths = Array.from({ length: s.n }, (_, i) => s.rowPtr[i + 1] - s.rowPtr[i]);
			const mean = lengths.reduce((a, b) => a + b) / s.n;
			const sd = Math.sqrt(lengths.reduce((a, b) => a + (b - mean) ** 2, 0) / s.n);
			// tolerances: common practice, no source (several standard errors at 20k rows)
			expect(Math.abs(mean - 20) / 20).toBeLessThan(0.02);
			expect(Math.abs(sd / mean - 0.5)).toBeLessThan(0.05);
			expect(Math.abs(positives(s) - positive)).toBeLessThan(0.015);
		}
	});

	it('every row has distinct ascending indices inside the feature range', () => {
		const s = generateRows({ ...base, rows: 3000, skew: 1.5, nnz: 40 });
		let bad = 0;
		for (let i = 0; i < s.n; i++) {
			for (let p = s.rowPtr[i] + 1; p < s.rowPtr[i + 1]; p++) if (!(s.indices[p] > s.indices[p - 1])) bad++;
		}
		expect(bad).toBe(0);
		expect(Math.max(...s.indices)).toBeLessThan(10_000);
	});

	it('feature indices above 2^31 stay exact (u32 indices up to 2^32 - 2)', () => {
		const s = generateRows({ rows: 500, features: 3_000_000_000, nnz: 10, seed: 2 });
		let high = 0;
		for (const x of s.indices) if (x >= 2 ** 31) high++;
		expect(high).toBeGreaterThan(0);
		expect(Math.max(...s.indices)).toBeLessThan(3_000_000_000);
	});

	it('nnzSpread 0 gives every row exactly k nonzeros', () => {
		const s = generateRows({ ...base, rows: 500, nnz: 17, nnzSpread: 0 });
		for (let i = 0; i < s.n; i++) expect(s.rowPtr[i + 1] - s.rowPtr[i]).toBe(17);
	});

	// Zipf's law: frequency ∝ rank^-s, so log(count) against log(rank) has slope -s
	// (G. K. Zipf, Human Behavior and the Principle of Least Effort, 1949).
	it('feature popularity follows the requested Zipf-like exponent', () => {
		for (const skew of [0, 0.8, 1.2]) {
			const s = generateRows({ ...base, skew, nnzSpread: 0 });
			// skip the saturated top ranks (in nearly every row) and the noisy tail
			const slope = popularitySlope(s, 20, 1000);
			expect(Math.abs(slope + skew), `skew ${skew}: slope ${slope}`).toBeLessThan(0.12);
		}
	});

	it('is deterministic by seed', () => {
		sameRows(generateRows({ ...base, rows: 2000, values: 'real' }), generateRows({ ...base, rows: 2000, values: 'real' }));
		const other = generateRows({ ...base, rows: 2000, values: 'real', seed: 12 });
		expect(other.indices.slice(0, 100)).not.toEqual(generateRows({ ...base, rows: 2000, values: 'real' }).indices.slice(0, 100));
	});

	it('indexRange spreads the same rows over a wider weight vector: a relabelling of the features, nothing else', () => {
		const compact = generateRows({ ...base, rows: 3000, features: 2000 });
		const spread = generateRows({ ...base, rows: 3000, features: 2000, indexRange: 50_000 });
		expect(spread.d).toBe(50_000);
		expect(Math.max(...spread.indices)).toBeGreaterThan(2000);
		sameRows(generateRows({ ...base, rows: 3000, features: 2000, indexRange: 2000 }), compact);
		// each feature is known by the rows it occurs in: the two sets hold the same such signatures, and the same labels
		const signatures = (s: SparseRows) => {
			const rowsOf = new Map<number, number[]>();
			for (let i = 0; i < s.n; i++) for (let p = s.rowPtr[i]; p < s.rowPtr[i + 1]; p++) rowsOf.set(s.indices[p], [...(rowsOf.get(s.indices[p]) ?? []), i]);
			return [...rowsOf.values()].map((r) => r.join(',')).sort();
		};
		expect(signatures(spread)).toEqual(signatures(compact));
		expect(Array.from(spread.labels)).toEqual(Array.from(compact.labels));
		expect(() => resolveGenerateOptions({ ...base, features: 2000, indexRange: 1999 })).toThrow(/indexRange/);
	});

	it('real values are thousandths in (0, 1]; binary data has no values', () => {
		const s = generateRows({ ...base, rows: 2000, values: 'real' });
		const off = s.values!.filter((v) => !(v > 0 && v <= 1) || Math.fround(Math.round(v * 1000) / 1000) !== v);
		expect(off.length).toBe(0);
		expect(generateRows({ ...base, rows: 10 }).values).toBeNull();
	});

	it('svm and bin forms hold the same rows as generateRows; gen→svm→convert equals gen→bin', async () => {
		for (const values of ['binary', 'real'] as const) {
			const opts = { ...base, rows: 5000, values, features: 3000 };
			const svm = join(dir, `g-${values}.svm`);
			const bin = join(dir, `g-${values}.bin`);
			const conv = join(dir, `g-${values}.conv.bin`);
			const pSvm = await generateToFile(opts, svm, 'svm');
			const pBin = await generateToFile(opts, bin, 'bin');
			await convertSvmlightToBinary(svm, conv);
			const mem = generateRows(opts);
			const fromBin = await loadBinary(bin);
			sameRows(fromBin, mem);
			sameRows(await loadBinary(conv), fromBin);
			const text = await loadSvmlight(svm);
			sameRows(text.rows, mem);
			// the generator's own profile agrees with the parser's and the binary profiler's
			expect(await profileFile(svm)).toEqual(pSvm);
			expect(await profileFile(bin)).toEqual(pBin);
			expect({ ...pSvm, bytes: 0, bytesPerRow: 0, format: '' }).toEqual({ ...pBin, bytes: 0, bytesPerRow: 0, format: '' });
			const h = await readBinaryHeader(bin);
			expect(h).toMatchObject({ n: 5000, d: 3000, nnz: mem.indices.length, valueKind: values });
		}
	});

	it('text rows are plain svmlight: label, space, index:value pairs', () => {
		const first = readFileSync(join(dir, 'g-real.svm'), 'latin1').split('\n')[0];
		expect(first).toMatch(/^[+-]1( \d+:(0\.\d{1,3}|1))+$/);
	});

	// Reference solver: Debian's liblinear-tools. A linear model trained on generated rows must
	// clearly beat the majority class on held-out generated rows (labels come from a hidden sparse w).
	it.skipIf(!existsSync('/usr/bin/liblinear-train'))('labels are learnable: liblinear beats the majority class on held-out rows', async () => {
		const opts = { rows: 12_000, features: 20_000, nnz: 30, positive: 0.4, noise: 0.05, seed: 4 };
		const all = join(dir, 'learn.svm');
		await generateToFile(opts, all, 'svm');
		const lines = readFileSync(all, 'latin1').trimEnd().split('\n');
		writeFileSync(join(dir, 'train.svm'), lines.slice(0, 8000).join('\n') + '\n');
		writeFileSync(join(dir, 'test.svm'), lines.slice(8000).join('\n') + '\n');
		execFileSync('/usr/bin/liblinear-train', ['-q', '-s', '2', '-c', '0.1', join(dir, 'train.svm'), join(dir, 'm.model')]);
		const out = execFileSync('/usr/bin/liblinear-predict', [join(dir, 'test.svm'), join(dir, 'm.model'), join(dir, 'out.txt')]).toString();
		const accuracy = Number(/Accuracy = ([\d.]+)%/.exec(out)![1]) / 100;
		const test = lines.slice(8000);
		const pos = test.filter((l) => l.startsWith('+1')).length / test.length;
		const majority = Math.max(pos, 1 - pos);
		expect(accuracy, `accuracy ${accuracy}, majority ${majority}`).toBeGreaterThan(majority + 0.15);
	});

	it('refuses bad options naming the field', () => {
		const bad: [Partial<GenerateOptions>, string][] = [
			[{ rows: 0 }, 'rows must be a whole number ≥ 1, got 0'],
			[{ nnz: 20, features: 10 }, 'nnz must be from 1 to features (10), got 20'],
			[{ noise: 0.5 }, 'noise must be at least 0 and below 0.5, got 0.5'],
			[{ positive: 1 }, 'positive must be strictly between 0 and 1, got 1'],
			[{ positive: 0.02, noise: 0.05 }, 'positive 0.02 cannot be reached with noise 0.05'],
			[{ skew: -1 }, 'skew must be from 0 to 5, got -1']
		];
		for (const [opts, message] of bad) {
			expect(() => resolveGenerateOptions(opts)).toThrow(message);
		}
		try {
			resolveGenerateOptions({ noise: 0.7 });
		} catch (err) {
			expect((err as GenerateOptionError).field).toBe('noise');
		}
	});
});
