/**
 * Streaming svmlight text-row writer: "+1 3:1 17:0.25\n" with 1-based ascending indices.
 * Bytes are formatted by hand into one output buffer; values that are whole thousandths
 * get a short fixed form, any other value its shortest round-trip decimal.
 */
import { openSync, writeSync, closeSync } from 'node:fs';

const OUT_BYTES = 4 << 20;
/** longest text of one entry: u32 index, ':', a value, ' ' */
const MAX_ENTRY = 64;

export class SvmlightWriter {
	private readonly fd: number;
	private out = new Uint8Array(OUT_BYTES);
	private len = 0;
	private written = 0;
	private closed = false;

	private constructor(private readonly path: string) {
		this.fd = openSync(path, 'w');
	}

	static open(path: string): SvmlightWriter {
		return new SvmlightWriter(path);
	}

	/** label ±1; indices 0-based ascending (written 1-based); values null = binary (written as 1) */
	writeRow(label: number, indices: ArrayLike<number>, values: ArrayLike<number> | null, count = indices.length): void {
		if (this.closed) throw new Error(`${this.path}: writeRow after close`);
		this.reserve(3);
		const out = this.out;
		out[this.len++] = label > 0 ? 43 /* + */ : 45 /* - */;
		out[this.len++] = 49; /* 1 */
		for (let j = 0; j < count; j++) {
			if (this.len + MAX_ENTRY > out.length) this.flush();
			out[this.len++] = 32;
			this.writeUint(indices[j] + 1);
			out[this.len++] = 58; /* : */
			if (values) this.writeValue(values[j]);
			else out[this.len++] = 49;
		}
		this.reserve(1);
		out[this.len++] = 10;
	}

	private reserve(bytes: number) {
		if (this.len + bytes > this.out.length) this.flush();
	}

	private writeUint(x: number) {
		const out = this.out;
		if (x < 10) {
			out[this.len++] = 48 + x;
			return;
		}
		let digits = 1;
		for (let t = x; t >= 10; t = Math.floor(t / 10)) digits++;
		let p = this.len + digits;
		this.len = p;
		while (x >= 10) {
			const q = Math.floor(x / 10);
			out[--p] = 48 + (x - q * 10);
			x = q;
		}
		out[--p] = 48 + x;
	}

	private writeValue(v: number) {
		const m = Math.round(v * 1000);
		if (m >= 0 && m < 1e12 && m / 1000 === v) {
			const whole = Math.floor(m / 1000);
			let frac = m - whole * 1000;
			this.writeUint(whole);
			if (frac !== 0) {
				const out = this.out;
				out[this.len++] = 46; /* . */
				let digits = 3;
				while (frac % 10 === 0) {
					frac /= 10;
					digits--;
				}
				const scale = digits === 3 ? 100 : digits === 2 ? 10 : 1;
				for (let s = scale; s >= 1; s /= 10) {
					const dgt = Math.floor(frac / s) % 10;
					out[this.len++] = 48 + dgt;
				}
			}
			return;
		}
		const text = String(v);
		for (let i = 0; i < text.length; i++) this.out[this.len++] = text.charCodeAt(i);
	}

	private flush() {
		let done = 0;
		while (done < this.len) done += writeSync(this.fd, this.out, done, this.len - done);
		this.written += this.len;
		this.len = 0;
	}

	/** Flush and close; resolves to the bytes written. */
	async close(): Promise<number> {
		if (this.closed) throw new Error(`${this.path}: closed twice`);
		this.flush();
		closeSync(this.fd);
		this.closed = true;
		return this.written;
	}

	abort(): void {
		if (this.closed) return;
		this.closed = true;
		closeSync(this.fd);
	}
}
