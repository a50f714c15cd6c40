/**
 * Seeded synthetic binary-classification rows, streamed to disk in bounded memory.
 *
 * Shape of the data:
 * - row length: lognormal around `nnz` with coefficient of variation `nnzSpread`, clamped to [1, features];
 * - feature popularity: rank r in 1..d drawn with density ∝ r^-skew (a continuous Zipf-like law,
 *   floored to ranks); ranks map to feature indices by a seeded affine permutation so popular
 *   features are scattered over the index range (0..d, or 0..indexRange when that is larger: the
 *   same rows with their features spread over a wider weight vector); the indices of a row are
 *   distinct and ascending;
 * - values: binary (1) or real (whole thousandths in (0, 1], so text rows round-trip to f32 exactly);
 * - labels: sign(w·x − t) of a hidden sparse weight vector w with N(0, 1) weights on a few popular
 *   features (in at most half of the rows each, chosen so a row holds about 10 of them on
 *   average, or k/2 when rows are shorter; at most 20 000, so flat popularity over very many
 *   features gives rows with few informative features and labels that are hard to learn),
 *   then each label flipped with probability `noise`. The threshold t is the score quantile of a
 *   separate pre-sample, set so the positive fraction after noise is `positive` in expectation.
 */
import type { SparseRows, ValueKind } from '../types.js';
import { Random } from './random.js';
import { BinaryRowWriter } from './binary.js';
import { SvmlightWriter } from './svmlight-writer.js';
import { ProfileStats, type DataProfile } from './stats.js';
import { stat } from 'node:fs/promises';

export interface GenerateOptions {
	/** rows n */
	rows: number;
	/** features d */
	features: number;
	/** indices are spread over 0..indexRange (≥ features; the file's feature dimension); default `features` */
	indexRange?: number;
	/** mean nonzeros per row k */
	nnz: number;
	/** coefficient of variation of the row length; default 0.5 (0 = every row has k nonzeros) */
	nnzSpread?: number;
	/** positive fraction p in (0, 1) */
	positive: number;
	/** probability each label is flipped, in [0, 0.5) */
	noise: number;
	/** Zipf-like popularity exponent ≥ 0 (0 = uniform) */
	skew: number;
	values: ValueKind;
	seed: number;
}

/** Defaults for every option, in one place (the CLI shows them in --help). */
export const GENERATE_DEFAULTS: Required<GenerateOptions> = {
	rows: 100_000,
	features: 100_000,
	indexRange: 0,
	nnz: 50,
	nnzSpread: 0.5,
	positive: 0.5,
	noise: 0.05,
	skew: 1,
	values: 'binary',
	seed: 1
};

/** An option that failed its check, named by its field. */
export class GenerateOptionError extends Error {
	constructor(
		readonly field: keyof GenerateOptions,
		message: string
	) {
		super(message);
	}
}

/** Check and default the options; throws GenerateOptionError naming the field. */
export function resolveGenerateOptions(opts: Partial<GenerateOptions>): Required<GenerateOptions> {
	const o = { ...GENERATE_DEFAULTS, ...Object.fromEntries(Object.entries(opts).filter(([, v]) => v !== undefined)) } as Required<GenerateOptions>;
	const fail = (field: keyof GenerateOptions, msg: string): never => {
		throw new GenerateOptionError(field, `${field} ${msg}`);
	};
	if (!Number.isInteger(o.rows) || o.rows < 1) fail('rows', `must be a whole number ≥ 1, got ${o.rows}`);
	if (!Number.isInteger(o.features) || o.features < 1 || o.features > 0xfffffffe) fail('features', `must be a whole number from 1 to ${0xfffffffe}, got ${o.features}`);
	if (o.indexRange === 0) o.indexRange = o.features;
	if (!Number.isInteger(o.indexRange) || o.indexRange < o.features || o.indexRange > 0xfffffffe) fail('indexRange', `must be a whole number from features (${o.features}) to ${0xfffffffe}, got ${o.indexRange}`);
	if (!(o.nnz >= 1) || o.nnz > o.features) fail('nnz', `must be from 1 to features (${o.features}), got ${o.nnz}`);
	if (!(o.nnzSpread >= 0) || o.nnzSpread > 10) fail('nnzSpread', `must be from 0 to 10, got ${o.nnzSpread}`);
	if (!(o.noise >= 0 && o.noise < 0.5)) fail('noise', `must be at least 0 and below 0.5, got ${o.noise}`);
	if (!(o.positive > 0 && o.positive < 1)) fail('positive', `must be strictly between 0 and 1, got ${o.positive}`);
	if (o.positive < o.noise || o.positive > 1 - o.noise) fail('positive', `${o.positive} cannot be reached with noise ${o.noise} (flipped labels alone make between ${o.noise} and ${1 - o.noise} positive)`);
	if (!(o.skew >= 0) || o.skew > 5) fail('skew', `must be from 0 to 5, got ${o.skew}`);
	if (o.values !== 'binary' && o.values !== 'real') fail('values', `must be binary or real, got ${String(o.values)}`);
	if (!Number.isFinite(o.seed)) fail('seed', `must be a number, got ${o.seed}`);
	return o;
}

/** Target mean count of informative features per row. */
const INFORMATIVE_PER_ROW = 10;
/** cap on informative features: with flat popularity over many features more would only add rare, unlearnable weights */
const MAX_INFORMATIVE = 20_000;
/** smallest share of rows an informative feature appears in */
const MIN_INFORMATIVE_SHARE = 0.01;
/** rows of the pre-sample that sets the label threshold */
const PRESAMPLE_ROWS = 50_000;
/** draws of distinct popular features before filling a row uniformly */
const MAX_DRAW_ROUNDS = 16;

/** no feature has this index: indices stop at 2^32 - 2 */
const EMPTY_KEY = 0xffffffff;

function gcd(a: number, b: number): number {
	while (b) [a, b] = [b, a % b];
	return a;
}

/** Produces rows one at a time into reusable scratch arrays. */
class RowSource {
	private readonly rnd: Random;
	private readonly d: number;
	private readonly k: number;
	private readonly sigma: number;
	private readonly real: boolean;
	// rank sampler: rank = floor((A·u + 1)^(1/e)), or exp(u·ln(d+1)) when e = 0
	private readonly e: number;
	private readonly A: number;
	private readonly logD1: number;
	// affine permutation rank → index over 0..range
	private readonly range: number;
	private readonly mulA: number;
	private readonly addB: number;
	// informative features: open-addressing table index → weight
	private readonly keys: Uint32Array;
	private readonly weights: Float64Array;
	private readonly mask: number;
	threshold = 0;
	flip: number;
	/** scratch: current row */
	indices = new Uint32Array(256);
	values = new Float64Array(256);
	length = 0;
	score = 0;

	constructor(o: Required<GenerateOptions>, stream: number, structure: Random) {
		this.rnd = new Random(o.seed, stream);
		this.d = o.features;
		this.range = o.indexRange;
		this.k = o.nnz;
		this.sigma = Math.sqrt(Math.log(1 + o.nnzSpread * o.nnzSpread));
		this.real = o.values === 'real';
		this.flip = o.noise;
		this.e = 1 - o.skew;
		this.A = Math.abs(this.e) < 1e-9 ? 0 : Math.pow(this.d + 1, this.e) - 1;
		this.logD1 = Math.log(this.d + 1);
		// structure (permutation and hidden weights) comes from its own stream, shared by all row sources
		const maxMul = Math.max(1, Math.min(this.range, Math.floor(2 ** 53 / this.range) - 1));
		let a = 1 + structure.int(maxMul);
		while (gcd(a, this.range) !== 1) a--;
		this.mulA = a;
		this.addB = structure.int(this.range);
		const ranks = this.informativeRanks(structure);
		let size = 4;
		while (size < ranks.length * 4) size *= 2;
		this.keys = new Uint32Array(size).fill(EMPTY_KEY);
		this.weights = new Float64Array(size);
		this.mask = size - 1;
		for (const r of ranks) this.insert(this.rankToIndex(r), structure.normal());
	}

	/** Probability that one draw lands on rank r (continuous law floored to ranks). */
	private rankMass(r: number): number {
		if (this.A === 0) return Math.log((r + 1) / r) / this.logD1;
		return (Math.pow(r + 1, this.e) - Math.pow(r, this.e)) / this.A;
	}

	/**
	 * A random half of the most popular ranks that a row holds about 2·target of, skipping ranks
	 * in more than half of all rows: near-constant features would carry no signal and would give
	 * many rows the same score (ties at the threshold make labels random).
	 */
	private informativeRanks(structure: Random): number[] {
		const target = Math.min(INFORMATIVE_PER_ROW, this.k / 2);
		let first = 1;
		while (first < this.d && this.k * this.rankMass(first) > 0.5) first++;
		// rarer features would leave too few examples per weight, unless no feature is that popular (flat popularity)
		const floor = this.k * this.rankMass(first) >= MIN_INFORMATIVE_SHARE ? MIN_INFORMATIVE_SHARE : 0;
		let expected = 0;
		let last = first - 1;
		while (last < this.d && expected < 2 * target && last - first + 1 < 2 * MAX_INFORMATIVE) {
			const q = Math.min(1, this.k * this.rankMass(last + 1));
			if (q < floor) break;
			last++;
			expected += q;
		}
		const R = last - first + 1;
		const m = Math.max(1, Math.round(R / 2));
		// partial Fisher–Yates over ranks first..last without materialising all of them when R is large
		const picked = new Map<number, number>();
		const out: number[] = [];
		for (let i = 0; i < m; i++) {
			const j = i + structure.int(R - i);
			const vj = picked.get(j) ?? j;
			picked.set(j, picked.get(i) ?? i);
			out.push(first + vj);
		}
		return out;
	}

	private rankToIndex(r: number): number {
		return (this.mulA * (r - 1) + this.addB) % this.range;
	}

	private slot(index: number): number {
		let h = (Math.imul(index, 0x9e3779b1) >>> 0) & this.mask;
		while (this.keys[h] !== EMPTY_KEY && this.keys[h] !== index) h = (h + 1) & this.mask;
		return h;
	}

	private insert(index: number, w: number) {
		const h = this.slot(index);
		this.keys[h] = index;
		this.weights[h] = w;
	}

	private weight(index: number): number {
		const h = this.slot(index);
		return this.keys[h] === index ? this.weights[h] : 0;
	}

	private drawIndex(): number {
		const u = this.rnd.next();
		let r = this.A === 0 ? Math.floor(Math.exp(u * this.logD1)) : Math.floor(Math.pow(this.A * u + 1, 1 / this.e));
		if (r < 1) r = 1;
		else if (r > this.d) r = this.d;
		return this.rankToIndex(r);
	}

	/** a feature drawn without regard to popularity, spread over the range like the others when it is wider (the plain draw otherwise keeps files made before indexRange the same) */
	private uniformIndex(): number {
		return this.range === this.d ? this.rnd.int(this.d) : this.rankToIndex(1 + this.rnd.int(this.d));
	}

	/** Fill indices[0..length) with `len` distinct ascending indices. */
	private drawRow(len: number) {
		if (this.indices.length < len) {
			this.indices = new Uint32Array(Math.max(len, this.indices.length * 2));
			this.values = new Float64Array(this.indices.length);
		}
		const idx = this.indices;
		if (len === this.d) {
			for (let j = 0; j < len; j++) idx[j] = this.rankToIndex(j + 1);
			idx.subarray(0, len).sort();
			return;
		}
		let have = 0;
		for (let round = 0; have < len; round++) {
			const uniform = round >= MAX_DRAW_ROUNDS;
			for (let j = have; j < len; j++) idx[j] = uniform ? this.uniformIndex() : this.drawIndex();
			const view = idx.subarray(0, len);
			view.sort();
			have = 1;
			for (let j = 1; j < len; j++) if (idx[j] !== idx[have - 1]) idx[have++] = idx[j];
		}
	}

	/** Draw the next row into the scratch arrays; returns its label. */
	next(): number {
		const rnd = this.rnd;
		let len = this.k;
		if (this.sigma > 0) len = this.k * Math.exp(this.sigma * rnd.normal() - (this.sigma * this.sigma) / 2);
		len = Math.round(len);
		if (len < 1) len = 1;
		else if (len > this.d) len = this.d;
		this.drawRow(len);
		this.length = len;
		const idx = this.indices;
		const val = this.values;
		let s = 0;
		if (this.real) {
			for (let j = 0; j < len; j++) {
				const v = (1 + rnd.int(1000)) / 1000;
				val[j] = v;
				s += v * this.weight(idx[j]);
			}
		} else {
			for (let j = 0; j < len; j++) s += this.weight(idx[j]);
		}
		// a tiny jitter breaks ties between rows with equal scores (e.g. no informative feature)
		this.score = s + 1e-9 * rnd.normal();
		let label = this.score > this.threshold ? 1 : -1;
		if (this.flip > 0 && rnd.next() < this.flip) label = -label;
		return label;
	}
}

/** Build the row source for these options, with its label threshold set from a pre-sample. */
function makeSource(o: Required<GenerateOptions>): RowSource {
	const pre = new RowSource(o, 2, new Random(o.seed, 1));
	const samples = Math.min(PRESAMPLE_ROWS, Math.max(1000, o.rows));
	const scores = new Float64Array(samples);
	for (let i = 0; i < samples; i++) {
		pre.next();
		scores[i] = pre.score;
	}
	scores.sort();
	// fraction above threshold before noise so that p(1−q) + (1−p)q after flips equals the target
	const clean = (o.positive - o.noise) / (1 - 2 * o.noise);
	const at = Math.min(samples - 1, Math.max(0, Math.floor((1 - clean) * samples)));
	const threshold = at === 0 && clean >= 1 ? -Infinity : scores[at];
	const src = new RowSource(o, 3, new Random(o.seed, 1));
	src.threshold = threshold;
	return src;
}

/** Small data sets in RAM (tests, calibration samples). */
export function generateRows(opts: Partial<GenerateOptions>): SparseRows {
	const o = resolveGenerateOptions(opts);
	const src = makeSource(o);
	const labels = new Int8Array(o.rows);
	const rowPtr = new Float64Array(o.rows + 1);
	let cap = Math.max(16, Math.ceil(o.rows * o.nnz * 1.2));
	let indices = new Uint32Array(cap);
	let values = o.values === 'real' ? new Float32Array(cap) : null;
	let at = 0;
	for (let i = 0; i < o.rows; i++) {
		labels[i] = src.next();
		const len = src.length;
		if (at + len > cap) {
			cap = Math.max(at + len, cap * 2);
			const grown = new Uint32Array(cap);
			grown.set(indices.subarray(0, at));
			indices = grown;
			if (values) {
				const gv = new Float32Array(cap);
				gv.set(values.subarray(0, at));
				values = gv;
			}
		}
		indices.set(src.indices.subarray(0, len), at);
		if (values) for (let j = 0; j < len; j++) values[at + j] = src.values[j];
		at += len;
		rowPtr[i + 1] = at;
	}
	return { n: o.rows, d: o.indexRange, labels, rowPtr, indices: indices.slice(0, at), values: values ? values.slice(0, at) : null };
}

/**
 * Stream rows to `out` as svmlight text or Loadline binary rows; memory stays bounded
 * by one row and one output buffer. Resolves to the profile of what was written.
 */
export async function generateToFile(
	opts: Partial<GenerateOptions>,
	out: string,
	format: 'svm' | 'bin',
	onProgress?: (rowsDone: number, rows: number) => void
): Promise<DataProfile> {
	const o = resolveGenerateOptions(opts);
	const src = makeSource(o);
	const stats = new ProfileStats();
	const real = o.values === 'real';
	const sink =
		format === 'bin'
			? BinaryRowWriter.open(out, { d: o.indexRange, valueKind: o.values })
			: SvmlightWriter.open(out);
	const every = Math.max(1, Math.min(100_000, Math.floor(o.rows / 100)));
	try {
		for (let i = 0; i < o.rows; i++) {
			const label = src.next();
			const len = src.length;
			sink.writeRow(label, src.indices.subarray(0, len), real ? src.values.subarray(0, len) : null);
			stats.add(label, len, src.indices[len - 1]);
			if (onProgress && (i + 1) % every === 0) onProgress(i + 1, o.rows);
		}
	} catch (err) {
		sink.abort();
		throw err;
	}
	await sink.close();
	const { size } = await stat(out);
	return stats.finish(size, format, o.values);
}
