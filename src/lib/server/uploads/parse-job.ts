/** The worker's side of an upload: parse the stored sample, then mark it ready with its profile or rejected with the reason. */
import { and, eq, inArray } from 'drizzle-orm';
import { join } from 'node:path';
import type { Db } from '../db/client.js';
import { uploads } from '../db/schema.js';
import { BAD_LINE_SHARE, uploadDir } from './config.js';
import { parseCsvSample, parseSvmlightSample, type SampleProfile } from './parse-sample.js';

const pct = (x: number) => `${(100 * x).toFixed(x < 0.1 ? 1 : 0)} %`;

/** null when the sample is usable, else why not. */
export function rejection(p: SampleProfile): string | null {
	const first = p.badLines[0] ? `; the first is line ${p.badLines[0].line}: ${p.badLines[0].message}` : '';
	if (p.rows === 0) return p.badLineCount ? `no usable rows: all ${p.badLineCount} lines are malformed${first}` : 'no rows: the file holds only blank lines, comments or a header';
	const share = p.badLineCount / p.lines;
	if (share > BAD_LINE_SHARE) return `${p.badLineCount} of ${p.lines} lines (${pct(share)}) are malformed, more than the ${pct(BAD_LINE_SHARE)} allowed${first}`;
	return null;
}

export async function parseUploadJob(db: Db, uploadId: string, log: (line: string) => void): Promise<void> {
	const [u] = await db
		.update(uploads)
		.set({ status: 'parsing', updatedAt: new Date() })
		.where(and(eq(uploads.id, uploadId), inArray(uploads.status, ['stored', 'parsing'])))
		.returning();
	if (!u) return;
	const path = join(uploadDir(), u.storedPath);
	let profile: SampleProfile;
	try {
		profile = u.kind === 'csv' ? await parseCsvSample(path, u.labelColumn ?? '') : await parseSvmlightSample(path);
	} catch (err) {
		const missing = (err as { code?: string }).code === 'ENOENT';
		// a missing file is a setup problem (web app and worker disagree on UPLOAD_DIR); never show server paths
		const message = missing ? 'the stored file is missing where the worker looks for it (the web app and the worker need the same UPLOAD_DIR); upload it again' : (err as Error).message;
		await db.update(uploads).set({ status: 'rejected', error: message, updatedAt: new Date() }).where(eq(uploads.id, u.id));
		return log(`upload ${u.id}: rejected (${message})`);
	}
	const { badLines, ...stats } = profile;
	const reason = rejection(profile);
	await db
		.update(uploads)
		.set({ status: reason ? 'rejected' : 'ready', error: reason, profile: stats, badLines, updatedAt: new Date() })
		.where(eq(uploads.id, u.id));
	log(`upload ${u.id}: ${reason ? `rejected (${reason})` : `ready, ${profile.rows} rows`}`);
}
