/** Dataset samples for the web app: receive to disk, list, read; the worker parses (uploads/parse-job.ts). */
import { randomUUID } from 'node:crypto';
import { mkdir, unlink } from 'node:fs/promises';
import { join } from 'node:path';
import { and, desc, eq } from 'drizzle-orm';
import { env } from '$env/dynamic/private';
import { db } from '../db/index.js';
import { uploads, users, type Upload } from '../db/schema.js';
import { ApiError } from '../http.js';
import * as jobs from '../jobs/index.js';
import { QUEUE_PARSE_UPLOAD } from '../jobs/config.js';
import type { UploadParams } from '$lib/schemas/upload.js';
import { BAD_LINE_SHARE, formatLimit, uploadDir, uploadLimitBytes } from './config.js';
import { discard, receive, UploadError } from './receive.js';
import type { SampleProfile } from './parse-sample.js';

export { BAD_LINE_SHARE, formatLimit };

export const limitBytes = () => uploadLimitBytes(env);

export async function list(teamId: string) {
	return db
		.select({ id: uploads.id, fileName: uploads.fileName, kind: uploads.kind, gzip: uploads.gzip, bytes: uploads.bytes, status: uploads.status, error: uploads.error, createdAt: uploads.createdAt, createdBy: users.email })
		.from(uploads)
		.leftJoin(users, eq(users.id, uploads.createdBy))
		.where(eq(uploads.teamId, teamId))
		.orderBy(desc(uploads.createdAt))
		.limit(200);
}

export async function get(id: string): Promise<Upload | null> {
	const rows = await db.select().from(uploads).where(eq(uploads.id, id)).limit(1);
	return rows[0] ?? null;
}

export async function getInTeam(id: string, teamId: string): Promise<Upload | null> {
	const rows = await db.select().from(uploads).where(and(eq(uploads.id, id), eq(uploads.teamId, teamId))).limit(1);
	return rows[0] ?? null;
}

/** Store the body at <upload dir>/<team>/<new id> (never a name from the client), then queue it for parsing. */
export async function create(teamId: string, userId: string, params: UploadParams, request: Request): Promise<Upload> {
	const limit = limitBytes();
	const declared = Number(request.headers.get('content-length') ?? NaN);
	if (declared > limit) {
		await discard(request.body, limit + 2 ** 20);
		throw new ApiError(413, 'too_large', `The file is larger than the upload limit of ${formatLimit(limit)}.`, { file: `at most ${formatLimit(limit)}` });
	}
	const id = randomUUID();
	const dir = join(uploadDir(env), teamId);
	await mkdir(dir, { recursive: true, mode: 0o750 });
	let got;
	try {
		got = await receive(request.body, join(dir, id), limit);
	} catch (err) {
		if (err instanceof UploadError) throw new ApiError(err.status, err.code, err.message, { file: err.message });
		throw err;
	}
	let row: Upload;
	try {
		[row] = await db
			.insert(uploads)
			.values({ id, teamId, fileName: params.fileName, kind: params.kind, labelColumn: params.kind === 'csv' ? params.labelColumn : null, gzip: got.gzip, bytes: got.bytes, storedPath: `${teamId}/${id}`, createdBy: userId })
			.returning();
		await jobs.send(QUEUE_PARSE_UPLOAD, { uploadId: row.id });
	} catch (err) {
		// no sample is kept that nobody will parse
		await unlink(join(dir, id)).catch(() => {});
		await db.delete(uploads).where(eq(uploads.id, id)).catch(() => {});
		throw err;
	}
	return row;
}

/** The dataset fields a plan takes from a ready sample (rows are the full dataset's, asked for separately). */
export function planFields(u: Upload) {
	const p = u.profile as Omit<SampleProfile, 'badLines'> | null;
	if (u.status !== 'ready' || typeof p?.nnzMean !== 'number') return null;
	return {
		features: p.maxFeature,
		nnzPerRow: Number(p.nnzMean.toPrecision(4)),
		positiveFraction: Number(p.positiveFraction.toPrecision(4)),
		valueKind: p.valueKind,
		format: 'text' as const,
		compressed: u.gzip,
		bytesPerRow: Number(p.bytesPerRow.toPrecision(4))
	};
}

export function view(u: Upload) {
	return {
		id: u.id,
		teamId: u.teamId,
		fileName: u.fileName,
		kind: u.kind,
		labelColumn: u.labelColumn,
		gzip: u.gzip,
		bytes: u.bytes,
		status: u.status,
		error: u.error,
		profile: u.profile,
		badLines: u.badLines ?? [],
		planFields: planFields(u),
		createdAt: u.createdAt,
		updatedAt: u.updatedAt
	};
}

/** The team's parsed samples, newest first, as a calibration offers them. */
export async function ready(teamId: string) {
	const rows = await db
		.select({ id: uploads.id, fileName: uploads.fileName, profile: uploads.profile, createdAt: uploads.createdAt })
		.from(uploads)
		.where(and(eq(uploads.teamId, teamId), eq(uploads.status, 'ready')))
		.orderBy(desc(uploads.createdAt))
		.limit(200);
	return rows.map((r) => ({ id: r.id, fileName: r.fileName, rows: (r.profile as { rows?: number } | null)?.rows ?? 0, createdAt: r.createdAt }));
}

/** The sample a calibration of this team may run on: 404 when it is not the team's, 400 when it is not parsed and ready. */
export async function forCalibration(teamId: string, id: string) {
	const u = await getInTeam(id, teamId);
	if (!u) throw new ApiError(404, 'not_found', 'No such upload in this plan\'s team.', { uploadId: 'no such upload in this team' });
	const rows = (u.profile as { rows?: number } | null)?.rows;
	if (u.status !== 'ready' || !rows) {
		const why = u.status === 'rejected' ? `was rejected (${u.error})` : 'is not parsed yet; try again when it is ready';
		throw new ApiError(400, 'invalid', `Invalid uploadId: the sample ${u.fileName} ${why}.`, { uploadId: `the sample ${why}` });
	}
	return { id: u.id, fileName: u.fileName, rows };
}
