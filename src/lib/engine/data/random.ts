/**
 * Fast seeded PRNG: xoshiro128** (Blackman and Vigna, "Scrambled linear pseudorandom
 * number generators", 2018), seeded through splitmix32 so any integer seed is usable.
 * 32-bit state words keep every step in Math.imul / shift arithmetic.
 */

/** splitmix32 step: a well-mixed 32-bit value from a counter, used to seed. */
export function splitmix32(x: number): number {
	x = (x + 0x9e3779b9) | 0;
	let z = x;
	z = Math.imul(z ^ (z >>> 16), 0x85ebca6b);
	z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35);
	return (z ^ (z >>> 16)) >>> 0;
}

const TWO_POW_32_INV = 1 / 4294967296;

export class Random {
	private a: number;
	private b: number;
	private c: number;
	private d: number;
	private spare = NaN;

	/** Any finite number seeds; equal seeds give equal streams. `stream` picks an independent sub-stream. */
	constructor(seed: number, stream = 0) {
		let s = (Math.floor(seed) ^ Math.imul(stream + 1, 0x27d4eb2d)) | 0;
		// mix in the high bits of seeds above 2^32
		s = (s ^ Math.floor(seed / 4294967296)) | 0;
		this.a = splitmix32((s = (s + 0x9e3779b9) | 0));
		this.b = splitmix32((s = (s + 0x9e3779b9) | 0));
		this.c = splitmix32((s = (s + 0x9e3779b9) | 0));
		this.d = splitmix32((s = (s + 0x9e3779b9) | 0));
		if ((this.a | this.b | this.c | this.d) === 0) this.a = 1;
	}

	/** uniform 32-bit unsigned integer */
	nextU32(): number {
		const b = this.b;
		const result = Math.imul(rotl(Math.imul(b, 5), 7), 9) >>> 0;
		const t = b << 9;
		this.c ^= this.a;
		this.d ^= b;
		this.b ^= this.c;
		this.a ^= this.d;
		this.c ^= t;
		this.d = rotl(this.d, 11);
		return result;
	}

	/** uniform in [0, 1) */
	next(): number {
		return this.nextU32() * TWO_POW_32_INV;
	}

	/** uniform in (0, 1]: safe for logarithms */
	nextOpen(): number {
		return (this.nextU32() + 1) * TWO_POW_32_INV;
	}

	/** uniform integer in [0, n) for n ≤ 2^32 */
	int(n: number): number {
		return Math.floor(this.next() * n);
	}

	/** standard normal (Box–Muller, both values used) */
	normal(): number {
		if (!Number.isNaN(this.spare)) {
			const s = this.spare;
			this.spare = NaN;
			return s;
		}
		const r = Math.sqrt(-2 * Math.log(this.nextOpen()));
		const t = 2 * Math.PI * this.next();
		this.spare = r * Math.sin(t);
		return r * Math.cos(t);
	}
}

function rotl(x: number, k: number): number {
	return (x << k) | (x >>> (32 - k));
}
