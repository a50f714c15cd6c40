/**
 * Stream a request body to a file without holding it in memory: a byte counter stops past the
 * limit, gzip (told by its magic bytes) is inflated through a second counter so a small file that
 * inflates past the limit is stopped too, and a NUL byte marks binary data, not text rows.
 * The file is written with O_EXCL at a path we chose; on any failure it is removed.
 */
import { createWriteStream } from 'node:fs';
import { unlink } from 'node:fs/promises';
import { Readable, Transform, type TransformCallback } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { createGunzip } from 'node:zlib';
import { formatLimit } from './config.js';

export class UploadError extends Error {
	constructor(
		readonly status: number,
		readonly code: string,
		message: string
	) {
		super(message);
	}
}

class Counter extends Transform {
	bytes = 0;
	constructor(
		private readonly limit: number,
		private readonly tooBig: () => UploadError,
		private readonly checkText = false
	) {
		super();
	}
	_transform(chunk: Buffer, _enc: BufferEncoding, done: TransformCallback) {
		this.bytes += chunk.length;
		if (this.bytes > this.limit) return done(this.tooBig());
		if (this.checkText && chunk.indexOf(0) !== -1) {
			return done(new UploadError(415, 'binary_data', `The file holds binary data (a NUL byte near byte ${this.bytes - chunk.length + chunk.indexOf(0) + 1}); upload svmlight text rows or CSV, optionally gzip-compressed.`));
		}
		done(null, chunk);
	}
}

/** First bytes of the stream, and a stream that yields them again followed by the rest. */
/**
 * Read and drop what the client still sends, so it gets our answer: a server that closes a
 * connection with unread data in it makes the client see a reset instead. Past maxBytes the
 * web server's own body limit (BODY_SIZE_LIMIT) ends the request anyway.
 */
async function dropRest(reader: ReadableStreamDefaultReader<Uint8Array>, maxBytes: number): Promise<void> {
	let dropped = 0;
	while (dropped <= maxBytes) {
		const { value, done } = await reader.read().catch(() => ({ value: undefined, done: true }));
		if (done) return;
		dropped += value?.length ?? 0;
	}
}

/** Drop a whole body that is refused before reading it. */
export async function discard(body: ReadableStream<Uint8Array> | null, maxBytes: number): Promise<void> {
	if (body && !body.locked) await dropRest(body.getReader(), maxBytes);
}

async function peek(body: ReadableStream<Uint8Array>, want: number): Promise<{ head: Buffer; stream: Readable; drain: (maxBytes: number) => Promise<void> }> {
	const reader = body.getReader();
	const parts: Buffer[] = [];
	let have = 0;
	let ended = false;
	while (have < want) {
		const { value, done } = await reader.read();
		if (done) {
			ended = true;
			break;
		}
		parts.push(Buffer.from(value));
		have += value.length;
	}
	const head = Buffer.concat(parts);
	async function* replay() {
		if (head.length) yield head;
		if (ended) return;
		for (;;) {
			const { value, done } = await reader.read();
			if (done) return;
			yield Buffer.from(value);
		}
	}
	const drain = (maxBytes: number) => (ended ? Promise.resolve() : dropRest(reader, maxBytes));
	return { head, stream: Readable.from(replay(), { objectMode: false }), drain };
}

export interface Received {
	/** bytes stored (after inflation) */
	bytes: number;
	/** bytes as sent */
	sentBytes: number;
	gzip: boolean;
}

export async function receive(body: ReadableStream<Uint8Array> | null, path: string, limit: number): Promise<Received> {
	// adapter-node gives no body to a request without a Content-Type
	if (!body) throw new UploadError(400, 'empty', 'The request has no body: send the file itself as the body, with a Content-Type such as application/octet-stream.');
	const { head, stream, drain } = await peek(body, 2);
	if (head.length === 0) throw new UploadError(400, 'empty', 'The file is empty.');
	const gzip = head[0] === 0x1f && head[1] === 0x8b;
	const sent = new Counter(limit, () => new UploadError(413, 'too_large', `The file is larger than the upload limit of ${formatLimit(limit)}.`));
	const stored = new Counter(
		limit,
		() => new UploadError(413, 'too_large', gzip ? `The file inflates to more than the upload limit of ${formatLimit(limit)}; send a smaller sample.` : `The file is larger than the upload limit of ${formatLimit(limit)}.`),
		true
	);
	const out = createWriteStream(path, { flags: 'wx', mode: 0o640 });
	try {
		if (gzip) await pipeline(stream, sent, createGunzip(), stored, out);
		else await pipeline(stream, sent, stored, out);
	} catch (err) {
		await unlink(path).catch(() => {});
		await drain(limit + 2 ** 20);
		if (err instanceof UploadError) throw err;
		const code = (err as { code?: string }).code ?? '';
		if (code.startsWith('Z_')) throw new UploadError(400, 'bad_gzip', `The file starts like gzip but does not inflate (${(err as Error).message}).`);
		throw err;
	}
	return { bytes: stored.bytes, sentBytes: sent.bytes, gzip };
}
