/**
 * A calibration on a real sample instead of synthetic rows: Debian's python3-sklearn copy of the
 * Wisconsin breast-cancer data (569 rows, 30 real features, 357 benign = positive, per sklearn's
 * descr/breast_cancer.rst). Every row file a run trained on must be made of the sample's rows,
 * never repeated; the record says where its data came from.
 */
import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { calibrate } from '../../../src/lib/engine/calibrate/run.js';
import { openSample, sampleOrder } from '../../../src/lib/engine/calibrate/sample.js';
import { calibrationRecordSchema } from '../../../src/lib/engine/calibrate/record.js';
import { BinaryRowWriter, loadBinary } from '../../../src/lib/engine/data/binary.js';
import { loadSvmlight } from '../../../src/lib/engine/data/svmlight.js';
import type { SparseRows } from '../../../src/lib/engine/types.js';
import { breastCancerRows, toSvmlight } from '../engine/solver/reference.js';
import { aPlan } from './plan-factory.js';

/** One text key per row (label, indices, values), so row sets can be compared. */
function rowKeys(s: SparseRows): string[] {
	const out: string[] = [];
	for (let i = 0; i < s.n; i++) {
		const lo = s.rowPtr[i];
		const hi = s.rowPtr[i + 1];
		out.push(`${s.labels[i]}|${[...s.indices.subarray(lo, hi)].join(',')}|${s.values ? [...s.values.subarray(lo, hi)].join(',') : ''}`);
	}
	return out;
}

async function writeSample(dir: string): Promise<{ path: string; rows: SparseRows }> {
	const rows = breastCancerRows();
	const path = join(dir, 'sample.bin');
	const w = BinaryRowWriter.open(path, { d: rows.d, valueKind: 'real' });
	for (let i = 0; i < rows.n; i++) w.writeRow(rows.labels[i], rows.indices.subarray(rows.rowPtr[i], rows.rowPtr[i + 1]), rows.values!.subarray(rows.rowPtr[i], rows.rowPtr[i + 1]));
	await w.close();
	return { path, rows: await loadBinary(path) };
}

describe('row selection from a sample', () => {
	it('takes the first rows for the first seed and a seeded selection without repeats for another', () => {
		expect([...sampleOrder(10, 4, 1, true)]).toEqual([0, 1, 2, 3]);
		const a = [...sampleOrder(100, 40, 2, false)];
		expect(new Set(a).size).toBe(40);
		expect(a.every((i) => i >= 0 && i < 100)).toBe(true);
		expect([...sampleOrder(100, 40, 2, false)]).toEqual(a);
		expect([...sampleOrder(100, 40, 3, false)]).not.toEqual(a);
		// asking for more rows than the sample holds gives each row once
		expect([...sampleOrder(5, 9, 2, false)].sort()).toEqual([0, 1, 2, 3, 4]);
	});

	it('names the field when the sample is not what the caller says', async () => {
		const dir = mkdtempSync(join(tmpdir(), 'loadline-sample-test-'));
		try {
			const { path } = await writeSample(dir);
			await expect(openSample({ path, rows: 500, features: 30 })).rejects.toThrow('sample.rows is 500 but');
			await expect(openSample({ path, rows: 569, features: 31 })).rejects.toThrow('sample.features is 31 but');
			await expect(openSample({ path: join(dir, 'missing.bin'), rows: 569, features: 30 })).rejects.toThrow(/^sample\.path: .* is not a readable Loadline binary row file/);
			await expect(openSample({ path, rows: 569, features: 30 }, 16)).rejects.toThrow('sample.features: the sample has 30 features, more than the 16 a calibration can hold');
		} finally {
			rmSync(dir, { recursive: true, force: true });
		}
	});

	it('writes a seeded selection of sample rows, in binary and in text, each row once', async () => {
		const dir = mkdtempSync(join(tmpdir(), 'loadline-sample-test-'));
		try {
			const { path, rows: sample } = await writeSample(dir);
			const keys = rowKeys(sample);
			const s = await openSample({ path, rows: 569, features: 30 });
			expect(await s.write(100, 2, 1, join(dir, 'a.bin'), 'bin')).toBe(100);
			expect(await s.write(100, 2, 1, join(dir, 'a.svm'), 'svm')).toBe(100);
			const bin = rowKeys(await loadBinary(join(dir, 'a.bin')));
			expect(new Set(bin).size).toBe(100);
			expect(bin.every((k) => keys.includes(k))).toBe(true);
			expect(bin).not.toEqual(keys.slice(0, 100));
			// the text form holds the same rows (f32 values print and parse back exactly)
			expect(rowKeys((await loadSvmlight(join(dir, 'a.svm'))).rows)).toEqual(bin);
			// more rows than the sample holds: the whole sample, never a repeat
			expect(await s.write(5000, 1, 1, join(dir, 'b.bin'), 'bin')).toBe(569);
			expect(rowKeys(await loadBinary(join(dir, 'b.bin')))).toEqual(keys);
		} finally {
			rmSync(dir, { recursive: true, force: true });
		}
	});
});

describe('a calibration on an uploaded sample', () => {
	it('trains only on the sample\'s rows, caps the ladder at its size and says so in the record', async () => {
		const dir = mkdtempSync(join(tmpdir(), 'loadline-sample-test-'));
		const work = join(dir, 'work');
		mkdirSync(work);
		try {
			const { path, rows: sample } = await writeSample(dir);
			const sampleKeys = rowKeys(sample);
			// the plan's own shape differs from the sample's: the sample's shape is what the runs measure
			const plan = aPlan({ dataset: { rows: 1_000_000, features: 100_000, nnzPerRow: 40, valueKind: 'binary' } });
			const rec = await calibrate(plan, { strategies: ['memory', 'stream'], budgetSeconds: 4, workDir: work, sample: { path, rows: 569, features: 30, uploadId: 'u-1', name: 'breast-cancer.csv' } });
			expect(calibrationRecordSchema.safeParse(JSON.parse(JSON.stringify(rec))).success).toBe(true);
			expect(rec.data).toEqual({ source: 'sample', rows: 569, features: 30, uploadId: 'u-1', name: 'breast-cancer.csv' });
			expect(rec.features).toBe(30);
			expect(rec.plan.dataset).toMatchObject({ rows: 1_000_000, features: 30, valueKind: 'real' });
			expect(rec.plan.dataset.positiveFraction).toBeCloseTo(357 / 569, 12);
			expect(rec.plan.dataset.nnzPerRow).toBeCloseTo(sample.rowPtr[sample.n] / 569, 12);
			expect(rec.runs.length).toBeGreaterThan(0);
			expect(Math.max(...rec.runs.map((r) => r.rows))).toBe(569);
			expect(rec.notes).toContain('ran on the uploaded sample "breast-cancer.csv" (569 rows, 30 features), not on synthetic data; the first seed took the sample\'s first rows, other seeds a seeded random selection');
			expect(rec.notes).toContain("runs were capped at the sample's 569 rows (rows are never repeated); larger row counts are extrapolated");

			// every row file the calibration wrote (binary for the runs, text for the parse measurement) holds sample rows only, each once
			const files = readdirSync(work).filter((f) => f.startsWith('rows-'));
			expect(files.some((f) => f.endsWith('-1-bin.bin'))).toBe(true);
			for (const f of files) {
				const rows = f.endsWith('.svm') ? (await loadSvmlight(join(work, f))).rows : await loadBinary(join(work, f));
				const keys = rowKeys(rows);
				expect(rows.n, f).toBeLessThanOrEqual(569);
				expect(new Set(keys).size, f).toBe(keys.length);
				expect(keys.every((k) => sampleKeys.includes(k)), f).toBe(true);
				// the first seed's files are the sample's first rows in order
				if (f.includes('-1-')) expect(keys, f).toEqual(sampleKeys.slice(0, rows.n));
			}
			// a second-seed run happens when the budget leaves room for it; its rows are then a selection, not the first rows
			for (const f of files.filter((f) => f.includes('-2-bin'))) expect(rowKeys(await loadBinary(join(work, f)))).not.toEqual(sampleKeys);
		} finally {
			rmSync(dir, { recursive: true, force: true });
		}
	});

	it('records synthetic data when no sample is given', async () => {
		const rec = await calibrate(aPlan({ dataset: { rows: 2000, features: 1000, nnzPerRow: 10 } }), { strategies: ['memory'], budgetSeconds: 1, maxRows: 2000 });
		expect(rec.data).toEqual({ source: 'synthetic' });
		expect(rec.notes.some((n) => n.includes('uploaded sample'))).toBe(false);
	});
});

describe('loadline calibrate --sample', () => {
	const loadline = (...args: string[]) => spawnSync(process.execPath, ['--import', 'tsx', 'src/cli/loadline.ts', 'calibrate', ...args], { encoding: 'utf8' });

	it('runs on svmlight text rows of a real sample and refuses a missing or malformed file, naming the flag', () => {
		const dir = mkdtempSync(join(tmpdir(), 'loadline-sample-cli-'));
		try {
			const plan = join(dir, 'plan.json');
			writeFileSync(plan, JSON.stringify(aPlan({ dataset: { rows: 100_000, features: 1000, nnzPerRow: 10 } })));
			const out = join(dir, 'cal.json');
			expect(loadline('--help').stdout).toContain('--sample FILE');

			const missing = loadline('--plan', plan, '--out', out, '--sample', join(dir, 'nope.svm'));
			expect(missing.status).toBe(2);
			expect(missing.stderr).toContain(`loadline calibrate: --sample: ${join(dir, 'nope.svm')}: no file at ${join(dir, 'nope.svm')}`);
			writeFileSync(join(dir, 'bad.svm'), '+1 1:1 3:1\n-1 2:x\n');
			const bad = loadline('--plan', plan, '--out', out, '--sample', join(dir, 'bad.svm'));
			expect(bad.status).toBe(2);
			expect(bad.stderr).toMatch(/--sample: .*bad\.svm: line 2: /);
			expect(bad.stderr).not.toMatch(/\n\s+at /);

			writeFileSync(join(dir, 'breast-cancer.svm'), toSvmlight(breastCancerRows()));
			const ok = loadline('--plan', plan, '--out', out, '--sample', join(dir, 'breast-cancer.svm'), '--strategies', 'memory', '--budget-seconds', '5');
			expect(ok.status, ok.stderr).toBe(0);
			const rec = calibrationRecordSchema.parse(JSON.parse(readFileSync(out, 'utf8')));
			expect(rec.data).toEqual({ source: 'sample', rows: 569, features: 30, name: 'breast-cancer.svm' });
			expect(ok.stderr).toContain('calibrate: note: ran on the sample "breast-cancer.svm" (569 rows, 30 features), not on synthetic data');
		} finally {
			rmSync(dir, { recursive: true, force: true });
		}
	});
});
