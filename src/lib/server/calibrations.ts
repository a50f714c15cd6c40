/**
 * Calibration records: the team's own (from calibration jobs) and the built-in one shipped with
 * the app, so a plan has an estimate before its first calibration. Records are reused by every
 * plan of the same shape until they are older than MAX_AGE_DAYS.
 */
import { createHash } from 'node:crypto';
import { and, eq } from 'drizzle-orm';
import { db } from './db/index.js';
import { calibrations } from './db/schema.js';
import { freshCalibration } from './jobs/store.js';
import { calibrationDataSchema, calibrationRecordSchema, type CalibrationData, type CalibrationRecord } from '$lib/engine/calibrate/record.js';
import type { Plan } from '$lib/schemas/plan.js';
import builtIn from './baseline-calibration.json';

export const MAX_AGE_DAYS = 7;
export const BUILT_IN_ID = 'built-in';

/** What a calibration's measurements depend on; the machine is scaled by the model, so it is left out. */
export function shapeKey(plan: Plan): string {
	const { dataset: d, training: t } = plan;
	const shape = {
		k: Math.round(d.nnzPerRow),
		p: Math.round(d.positiveFraction * 100) / 100,
		values: d.valueKind,
		weights: Math.round(Math.log2(d.features)),
		format: d.format,
		compressed: d.compressed,
		loss: t.loss,
		C: t.C,
		tol: t.tol
	};
	return createHash('sha256').update(JSON.stringify(shape)).digest('hex').slice(0, 32);
}

export interface CalibrationMeta {
	id: string;
	source: 'built-in' | 'synthetic' | 'sample';
	createdAt: string;
	machine: string;
	/** the calibration was made for a plan of this plan's shape */
	sameShape: boolean;
	/** source 'sample': the uploaded sample it ran on (file name as uploaded, rows used at most) */
	sample?: SampleUsed;
}

export interface SampleUsed {
	name: string | null;
	rows: number;
	uploadId: string | null;
}

/** The uploaded sample a stored record ran on, or null when it ran on synthetic data (or predates the field). */
export function sampleOf(record: unknown): SampleUsed | null {
	const data = calibrationDataSchema.safeParse((record as { data?: unknown } | null)?.data);
	return data.success ? sampleIn(data.data) : null;
}

function sampleIn(data: CalibrationData | undefined): SampleUsed | null {
	return data?.source === 'sample' ? { name: data.name ?? null, rows: data.rows, uploadId: data.uploadId ?? null } : null;
}

export interface ResolvedCalibration {
	record: CalibrationRecord;
	meta: CalibrationMeta;
}

let builtInRecord: CalibrationRecord | null = null;

export function builtInCalibration(plan?: Plan): ResolvedCalibration {
	// Parsed on first use, not at import: the build imports this module without running it.
	builtInRecord ??= calibrationRecordSchema.parse(builtIn);
	return {
		record: builtInRecord,
		meta: {
			id: BUILT_IN_ID,
			source: 'built-in',
			createdAt: builtInRecord.machine.date,
			machine: builtInRecord.machine.cpuModel,
			sameShape: plan ? shapeKey(plan) === shapeKey(builtInRecord.plan) : false
		}
	};
}

function resolved(row: typeof calibrations.$inferSelect, plan: Plan | undefined): ResolvedCalibration {
	const record = calibrationRecordSchema.parse(row.record);
	const sample = row.source === 'sample' ? sampleIn(record.data) : null;
	return {
		record,
		meta: {
			id: row.id,
			source: row.source === 'sample' ? 'sample' : 'synthetic',
			createdAt: row.createdAt.toISOString(),
			machine: record.machine.cpuModel,
			sameShape: plan ? row.shapeKey === shapeKey(plan) : true,
			...(sample && { sample })
		}
	};
}

/** A team's calibration by id, or null when it is not the team's. */
export async function get(teamId: string, id: string, plan?: Plan): Promise<ResolvedCalibration | null> {
	if (id === BUILT_IN_ID) return builtInCalibration(plan);
	if (!/^[0-9a-f-]{36}$/i.test(id)) return null;
	const [row] = await db.select().from(calibrations).where(and(eq(calibrations.id, id), eq(calibrations.teamId, teamId)));
	return row ? resolved(row, plan) : null;
}

/**
 * The newest fresh synthetic calibration of the plan's shape in the team, or null. Records made on an
 * uploaded sample serve only the plans that ask for them by id (forPlan): what one sample's rows
 * measured is not what another dataset of the same shape would.
 */
export async function freshFor(teamId: string, plan: Plan): Promise<ResolvedCalibration | null> {
	const row = await freshCalibration(db, teamId, shapeKey(plan), MAX_AGE_DAYS);
	return row ? resolved(row, plan) : null;
}

/**
 * The calibration an estimate should rest on: the one asked for when it ran on an uploaded sample (real data
 * beats synthetic), else the newer of the one asked for and a fresh synthetic one of this shape, else the built-in one.
 */
export async function forPlan(teamId: string, plan: Plan, calibrationId?: string | null): Promise<ResolvedCalibration> {
	const asked = calibrationId ? await get(teamId, calibrationId, plan) : null;
	if (asked?.meta.source === 'sample') return asked;
	const fresh = await freshFor(teamId, plan);
	if (asked && (!fresh || asked.meta.createdAt >= fresh.meta.createdAt)) return asked;
	return fresh ?? asked ?? builtInCalibration(plan);
}
