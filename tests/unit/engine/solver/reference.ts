/**
 * Helpers for checking the solvers against Debian's liblinear-tools (/usr/bin/liblinear-train),
 * on the breast-cancer CSV shipped by Debian's python3-sklearn (UCI Wisconsin diagnostic set).
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Loss, SparseRows } from '../../../../src/lib/engine/types.js';
import { lossAt } from '../../../../src/lib/engine/solver/losses.js';
import { dot } from '../../../../src/lib/engine/solver/sparse.js';

export const LIBLINEAR_TRAIN = '/usr/bin/liblinear-train';
export const BREAST_CANCER_CSV = '/usr/lib/python3/dist-packages/sklearn/datasets/data/breast_cancer.csv';

/** liblinear-train -s codes: 3 = L1-loss SVC dual, 1 = L2-loss SVC dual, 7 = logistic regression dual. */
export const LIBLINEAR_SOLVER: Record<Loss, number> = { hinge: 3, sqhinge: 1, logistic: 7 };

/**
 * The breast-cancer CSV as rows: the header line holds counts, the last column is the target
 * (1 = benign → +1, 0 = malignant → −1); each feature column scaled to [0, 1] by its min and max.
 */
export function breastCancerRows(): SparseRows {
	const lines = readFileSync(BREAST_CANCER_CSV, 'utf8').trim().split('\n');
	const [nText, dText] = lines[0].split(',');
	const n = Number(nText);
	const d = Number(dText);
	const table = lines.slice(1).map((l) => l.split(',').map(Number));
	const lo = new Array<number>(d).fill(Infinity);
	const hi = new Array<number>(d).fill(-Infinity);
	for (const r of table)
		for (let j = 0; j < d; j++) {
			lo[j] = Math.min(lo[j], r[j]);
			hi[j] = Math.max(hi[j], r[j]);
		}
	const labels = new Int8Array(n);
	const rowPtr = new Float64Array(n + 1);
	const indices: number[] = [];
	const values: number[] = [];
	table.forEach((r, i) => {
		labels[i] = r[d] === 1 ? 1 : -1;
		for (let j = 0; j < d; j++) {
			const v = hi[j] > lo[j] ? (r[j] - lo[j]) / (hi[j] - lo[j]) : 0;
			// zeros are left out, as in svmlight text rows
			if (v !== 0) {
				indices.push(j);
				values.push(v);
			}
		}
		rowPtr[i + 1] = indices.length;
	});
	return { n, d, labels, rowPtr, indices: Uint32Array.from(indices), values: Float32Array.from(values) };
}

/** svmlight text rows (1-based indices) of `rows`; values printed as their f32 value so both solvers see the same numbers. */
export function toSvmlight(rows: SparseRows): string {
	const out: string[] = [];
	for (let i = 0; i < rows.n; i++) {
		const parts = [rows.labels[i] > 0 ? '+1' : '-1'];
		for (let p = rows.rowPtr[i]; p < rows.rowPtr[i + 1]; p++) {
			parts.push(`${rows.indices[p] + 1}:${rows.values ? rows.values[p] : 1}`);
		}
		out.push(parts.join(' '));
	}
	return out.join('\n') + '\n';
}

/** Run liblinear-train and return the weight vector of its model for the +1 class. */
export function liblinearWeights(rows: SparseRows, loss: Loss, C: number, eps: number): Float64Array {
	const dir = mkdtempSync(join(tmpdir(), 'loadline-ref-'));
	const data = join(dir, 'train.svm');
	const model = join(dir, 'model.txt');
	writeFileSync(data, toSvmlight(rows));
	execFileSync(LIBLINEAR_TRAIN, ['-q', '-s', String(LIBLINEAR_SOLVER[loss]), '-c', String(C), '-e', String(eps), '-B', '-1', data, model]);
	return parseModel(readFileSync(model, 'utf8'), rows.d);
}

/** liblinear model file: header lines, then "w" and one weight per line; w scores the first listed label. */
export function parseModel(text: string, d: number): Float64Array {
	const lines = text.trim().split('\n');
	const labelLine = lines.find((l) => l.startsWith('label '));
	if (!labelLine) throw new Error('model file has no label line');
	const first = Number(labelLine.split(/\s+/)[1]);
	const start = lines.indexOf('w') + 1;
	const w = new Float64Array(d);
	for (let j = 0; j < d && start + j < lines.length; j++) w[j] = Number(lines[start + j].trim()) * (first === 1 ? 1 : -1);
	return w;
}

/** P(w) = ½‖w‖² + C Σ ℓ(yᵢ wᵀxᵢ) and the training accuracy, computed here from the rows. */
export function primalOf(rows: SparseRows, w: Float64Array, loss: Loss, C: number): { primal: number; accuracy: number } {
	let reg = 0;
	for (let j = 0; j < w.length; j++) reg += w[j] * w[j];
	let sum = 0;
	let correct = 0;
	for (let i = 0; i < rows.n; i++) {
		const wx = dot(w, rows.indices, rows.values, rows.rowPtr[i], rows.rowPtr[i + 1]);
		sum += lossAt(loss, rows.labels[i] * wx);
		if ((wx > 0 ? 1 : -1) === rows.labels[i]) correct++;
	}
	return { primal: 0.5 * reg + C * sum, accuracy: correct / rows.n };
}
