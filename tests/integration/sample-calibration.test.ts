/**
 * Calibration on an uploaded sample (real data) instead of synthetic rows: the API takes an
 * optional uploadId of the plan's team, the worker (started here, with the tiny test budget)
 * trains on the sample's rows, and the stored calibration and the estimate say so. Reuse never
 * mixes records of different data. The sample is Debian's python3-sklearn copy of the Wisconsin
 * breast-cancer data (569 rows, 30 features, 357 benign: sklearn's descr/breast_cancer.rst).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { randomUUID } from 'node:crypto';
import { eq } from 'drizzle-orm';
import { client, signIn } from '../helpers/session.js';
import { addMember, closeDb, db, makeProject, makeTeam, makeUser } from '../helpers/factories.js';
import { makePlan, smallPlan } from '../helpers/plans.js';
import { startWorker, type TestWorker } from '../helpers/worker.js';
import { calibrations } from '../../src/lib/server/db/schema.js';
import { calibrationRecordSchema } from '../../src/lib/engine/calibrate/record.js';

let editor: ReturnType<typeof client>;
let outsider: ReturnType<typeof client>;
let teamId: string;
let otherTeamId: string;
let projectId: string;
let worker: TestWorker;

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

function upload(call: ReturnType<typeof client>, team: string, body: string, params: Record<string, string>) {
	const q = new URLSearchParams({ teamId: team, ...params });
	return call(`/api/uploads?${q}`, { method: 'POST', body, headers: { 'content-type': 'application/octet-stream' } });
}

async function parsed(call: ReturnType<typeof client>, id: string): Promise<{ id: string; status: string }> {
	for (let i = 0; i < 150; i++) {
		const { upload: u } = await (await call(`/api/uploads/${id}`)).json();
		if (u.status === 'ready' || u.status === 'rejected') return u;
		await sleep(200);
	}
	throw new Error(`upload ${id} was not parsed`);
}

async function settled(id: string) {
	for (let i = 0; i < 150; i++) {
		const { job } = await (await editor(`/api/calibrations/${id}`)).json();
		if (job.status !== 'queued' && job.status !== 'running') return job;
		await sleep(300);
	}
	throw new Error(`calibration ${id} did not finish`);
}

/** The breast-cancer CSV with a header row (its first line holds counts, not names). */
function breastCancerCsv() {
	const source = readFileSync('/usr/lib/python3/dist-packages/sklearn/datasets/data/breast_cancer.csv', 'utf8').split('\n');
	const header = [...Array.from({ length: 30 }, (_, i) => `f${i + 1}`), 'benign'].join(',');
	return [header, ...source.slice(1)].join('\n');
}

let sampleId: string;
let rejectedId: string;
let foreignId: string;

beforeAll(async () => {
	const team = await makeTeam();
	teamId = team.id;
	projectId = (await makeProject(team.id)).id;
	const other = await makeTeam();
	otherTeamId = other.id;
	const e = await makeUser('editor');
	const o = await makeUser('outsider');
	await addMember(team.id, e.id, 'editor');
	await addMember(other.id, o.id, 'owner');
	editor = client(await signIn(e.email!));
	outsider = client(await signIn(o.email!));
	worker = await startWorker();
	const csv = breastCancerCsv();
	sampleId = (await (await upload(editor, teamId, csv, { kind: 'csv', labelColumn: 'benign', fileName: 'breast-cancer.csv' })).json()).upload.id;
	rejectedId = (await (await upload(editor, teamId, 'a,b\n1,2\n', { kind: 'csv', labelColumn: 'y', fileName: 'no-label.csv' })).json()).upload.id;
	foreignId = (await (await upload(outsider, otherTeamId, csv, { kind: 'csv', labelColumn: 'benign', fileName: 'theirs.csv' })).json()).upload.id;
	expect((await parsed(editor, sampleId)).status).toBe('ready');
	expect((await parsed(editor, rejectedId)).status).toBe('rejected');
	expect((await parsed(outsider, foreignId)).status).toBe('ready');
});

afterAll(async () => {
	await worker?.stop();
	await closeDb();
});

describe('calibration on an uploaded sample', () => {
	it('runs on the sample, stores source sample with the upload, and the estimate says what it rests on', async () => {
		const plan = await makePlan(teamId, projectId, smallPlan(0.75));
		const res = await editor(`/api/plans/${plan.id}/calibrate`, { method: 'POST', json: { uploadId: sampleId } });
		expect(res.status).toBe(202);
		const queued = await res.json();
		expect(queued.message).toBe('Calibration queued, on the uploaded sample breast-cancer.csv (569 rows).');
		const job = await settled(queued.job.id);
		expect(job.status, job.error).toBe('done');
		expect(job.calibration).toMatchObject({ source: 'sample', sample: { name: 'breast-cancer.csv', rows: 569, uploadId: sampleId } });

		const [row] = await db().select().from(calibrations).where(eq(calibrations.id, job.calibrationId));
		expect(row).toMatchObject({ teamId, source: 'sample', uploadId: sampleId });
		const record = calibrationRecordSchema.parse(row.record);
		expect(record.data).toEqual({ source: 'sample', rows: 569, features: 30, uploadId: sampleId, name: 'breast-cancer.csv' });
		// the runs measured the sample's shape, not the plan's synthetic one
		expect(record.plan.dataset).toMatchObject({ features: 30, valueKind: 'real' });
		expect(record.plan.dataset.positiveFraction).toBeCloseTo(357 / 569, 12);
		expect(Math.max(...record.runs.map((r) => r.rows))).toBeLessThanOrEqual(569);
		expect(record.notes.some((n) => n.startsWith('ran on the uploaded sample "breast-cancer.csv" (569 rows, 30 features)'))).toBe(true);

		const est = await editor('/api/estimate', { method: 'POST', json: { plan: smallPlan(0.75), teamId, calibrationId: job.calibrationId } });
		expect(est.status).toBe(200);
		expect((await est.json()).calibration).toMatchObject({ id: job.calibrationId, source: 'sample', sample: { name: 'breast-cancer.csv', rows: 569 } });

		// the same sample again reuses the record; synthetic data for the same shape does not
		const again = await (await editor(`/api/plans/${plan.id}/calibrate`, { method: 'POST', json: { uploadId: sampleId } })).json();
		expect(again).toMatchObject({ reused: true, job: { calibrationId: job.calibrationId } });
		expect(again.message).toMatch(/^Reused a calibration of the same shape on the sample breast-cancer.csv/);
		const synthetic = await editor(`/api/plans/${plan.id}/calibrate`, { method: 'POST', json: {} });
		expect(synthetic.status).toBe(202);
		const other = await settled((await synthetic.json()).job.id);
		expect(other.calibration).toMatchObject({ source: 'synthetic', sample: null });
		expect(other.calibrationId).not.toBe(job.calibrationId);
		// and an estimate that asked for the sample-based calibration keeps it over the newer synthetic one
		const kept = await (await editor('/api/estimate', { method: 'POST', json: { plan: smallPlan(0.75), teamId, calibrationId: job.calibrationId } })).json();
		expect(kept.calibration.id).toBe(job.calibrationId);
		// without asking, a plan of this shape rests on the synthetic record, never on someone's sample
		const plain = await (await editor('/api/estimate', { method: 'POST', json: { plan: smallPlan(0.75), teamId } })).json();
		expect(plain.calibration).toMatchObject({ id: other.calibrationId, source: 'synthetic' });
	}, 90_000);

	it('names uploadId when it is malformed or not parsed (400) and hides other teams\' uploads (404)', async () => {
		const plan = await makePlan(teamId, projectId, smallPlan(0.8));
		// the plan page offers the team's parsed samples beside synthetic data, and only those
		const page = await (await editor(`/teams/${teamId}/plans/${plan.id}`)).text();
		expect(page).toContain('synthetic data shaped like the plan');
		expect(page).toContain('uploaded sample "breast-cancer.csv" (569 rows)');
		expect(page).not.toContain('no-label.csv');
		expect(page).not.toContain('theirs.csv');

		const bad = await editor(`/api/plans/${plan.id}/calibrate`, { method: 'POST', json: { uploadId: 'sample-1' } });
		expect(bad.status).toBe(400);
		expect((await bad.json()).error.fields).toEqual({ uploadId: "uploadId must be the id of one of the team's uploaded samples" });

		const rejected = await editor(`/api/plans/${plan.id}/calibrate`, { method: 'POST', json: { uploadId: rejectedId } });
		expect(rejected.status).toBe(400);
		const r = (await rejected.json()).error;
		expect(r.message).toMatch(/^Invalid uploadId: the sample no-label\.csv was rejected \(line 1: the header has no column named "y"/);
		expect(Object.keys(r.fields)).toEqual(['uploadId']);

		for (const id of [foreignId, randomUUID()]) {
			const hidden = await editor(`/api/plans/${plan.id}/calibrate`, { method: 'POST', json: { uploadId: id } });
			expect(hidden.status).toBe(404);
			expect((await hidden.json()).error).toMatchObject({ code: 'not_found', fields: { uploadId: 'no such upload in this team' } });
		}
	});
});
