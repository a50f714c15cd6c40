/** The upload a sample calibration runs on, as the calibration thread needs it (worker side: takes the worker's own Drizzle client). */
import { join } from 'node:path';
import { and, eq } from 'drizzle-orm';
import type { Db } from '../db/client.js';
import { uploads } from '../db/schema.js';
import { uploadDir } from './config.js';
import type { SampleSource } from './sample-rows.js';

/** The sample's source, or why it cannot be used (a message for the job's error). */
export async function sampleSource(db: Db, uploadId: string, teamId: string): Promise<SampleSource | string> {
	const [u] = await db.select().from(uploads).where(and(eq(uploads.id, uploadId), eq(uploads.teamId, teamId))).limit(1);
	if (!u) return 'the uploaded sample this calibration was asked to run on no longer exists';
	const p = u.profile as { maxFeature?: number; valueKind?: 'binary' | 'real' } | null;
	if (u.status !== 'ready' || !p?.maxFeature || !p.valueKind) return `the uploaded sample ${u.fileName} is ${u.status}, not parsed and ready`;
	return { textPath: join(uploadDir(), u.storedPath), kind: u.kind === 'csv' ? 'csv' : 'svmlight', labelColumn: u.labelColumn, valueKind: p.valueKind, features: p.maxFeature, uploadId: u.id, fileName: u.fileName };
}
