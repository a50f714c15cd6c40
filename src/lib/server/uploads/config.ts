/**
 * Upload settings, read from the environment in one place (web server, worker and `npm start`):
 *   UPLOAD_LIMIT_BYTES  largest sample, counted both as sent and after gzip inflation  default 268435456 (256 MiB)
 *   UPLOAD_DIR          folder samples are stored in, one subfolder per team           default .data/uploads
 */
import { resolve } from 'node:path';

export const DEFAULT_UPLOAD_LIMIT_BYTES = 256 * 2 ** 20;
/** more malformed lines than this share rejects the sample */
export const BAD_LINE_SHARE = 0.05;
/** malformed lines kept to show on the sample's page */
export const BAD_LINES_KEPT = 20;

export function uploadLimitBytes(env: Record<string, string | undefined> = process.env): number {
	const raw = env.UPLOAD_LIMIT_BYTES;
	if (!raw) return DEFAULT_UPLOAD_LIMIT_BYTES;
	const x = Number(raw);
	if (!Number.isInteger(x) || x < 1024) throw new Error(`UPLOAD_LIMIT_BYTES must be a whole number of at least 1024, got "${raw}"`);
	return x;
}

export function uploadDir(env: Record<string, string | undefined> = process.env): string {
	return resolve(env.UPLOAD_DIR || '.data/uploads');
}

/** "256 MiB" style, for the page and messages. */
export function formatLimit(bytes: number): string {
	if (bytes >= 2 ** 30 && bytes % 2 ** 30 === 0) return `${bytes / 2 ** 30} GiB`;
	if (bytes >= 2 ** 20) return `${Number((bytes / 2 ** 20).toPrecision(3))} MiB`;
	return `${Number((bytes / 1024).toPrecision(3))} KiB`;
}
