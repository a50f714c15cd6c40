/**
 * Dataset-sample uploads: streamed to disk, parsed by a worker (started here) into a profile with
 * the first malformed lines; and the rejections: over the size limit, a gzip bomb, binary garbage,
 * a file name with folders in it, too many bad lines — with nothing written outside the upload folder.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inject } from 'vitest';
import { existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, relative } from 'node:path';
import { randomBytes } from 'node:crypto';
import { gzipSync } from 'node:zlib';
import { client, signIn } from '../helpers/session.js';
import { addMember, closeDb, makeProject, makeTeam, makeUser } from '../helpers/factories.js';
import { startWorker, type TestWorker } from '../helpers/worker.js';

let editor: ReturnType<typeof client>;
let viewer: ReturnType<typeof client>;
let outsider: ReturnType<typeof client>;
let teamId: string;
let worker: TestWorker;
let limit: number;

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

function upload(call: ReturnType<typeof client>, body: BodyInit, params: Record<string, string>) {
	const q = new URLSearchParams({ teamId, kind: 'svmlight', ...params });
	return call(`/api/uploads?${q}`, { method: 'POST', body, headers: { 'content-type': 'application/octet-stream' } });
}

interface UploadView {
	id: string;
	status: string;
	error: string | null;
	gzip: boolean;
	profile: Record<string, number | string> | null;
	badLines: { line: number; message: string }[];
	planFields: Record<string, unknown> | null;
}

async function parsed(id: string): Promise<UploadView> {
	for (let i = 0; i < 150; i++) {
		const { upload: u } = await (await editor(`/api/uploads/${id}`)).json();
		if (u.status === 'ready' || u.status === 'rejected') return u;
		await sleep(200);
	}
	throw new Error(`upload ${id} was not parsed`);
}

/** Every file under the test's temporary folder, relative to it: the upload folder and its siblings. */
function filesAround(): string[] {
	const top = dirname(inject('uploadDir'));
	const out: string[] = [];
	const walk = (d: string) => {
		for (const name of readdirSync(d)) {
			const p = join(d, name);
			// the cluster's own files change on their own
			if (p === join(top, 'postgres')) continue;
			if (statSync(p).isDirectory()) walk(p);
			else out.push(relative(top, p));
		}
	};
	if (existsSync(top)) walk(top);
	return out.sort();
}

/** Invented text rows: 200 rows, label +1 every fourth, three features each (indices up to 24), three malformed lines. */
function sampleText() {
	const lines: string[] = [];
	const bad: { line: number; message: RegExp }[] = [];
	for (let i = 0; i < 200; i++) {
		lines.push(`${i % 4 === 0 ? '+1' : '-1'} ${(i % 7) + 1}:0.5 10:1 ${20 + (i % 5)}:2`);
		if (i === 9) (lines.push('+1 3:x'), bad.push({ line: lines.length, message: /value "x" of feature 3 is not a number/ }));
		if (i === 99) (lines.push('-1 5:1 2:1'), bad.push({ line: lines.length, message: /feature index 2 after 5/ }));
		if (i === 150) (lines.push('bogus 1:1'), bad.push({ line: lines.length, message: /label "bogus"/ }));
	}
	return { text: lines.join('\n') + '\n', bad };
}

beforeAll(async () => {
	const team = await makeTeam();
	teamId = team.id;
	await makeProject(team.id);
	const e = await makeUser('editor');
	const v = await makeUser('viewer');
	const o = await makeUser('outsider');
	await addMember(team.id, e.id, 'editor');
	await addMember(team.id, v.id, 'viewer');
	await addMember((await makeTeam()).id, o.id, 'owner');
	editor = client(await signIn(e.email!));
	viewer = client(await signIn(v.email!));
	outsider = client(await signIn(o.email!));
	worker = await startWorker();
	limit = (await (await editor(`/api/uploads?teamId=${teamId}`)).json()).limitBytes;
});

afterAll(async () => {
	await worker?.stop();
	await closeDb();
});

describe('sample uploads', () => {
	it('profiles svmlight text rows and lists the first malformed lines with their numbers', async () => {
		const { text, bad } = sampleText();
		const res = await upload(editor, text, { fileName: 'clicks-sample.svm' });
		expect(res.status).toBe(202);
		const { upload: stored } = await res.json();
		expect(stored.status).toBe('stored');
		const u = await parsed(stored.id);
		expect(u.status).toBe('ready');
		expect(u.profile).toMatchObject({ rows: 200, maxFeature: 24, nnzMean: 3, nnzStd: 0, positiveFraction: 0.25, valueKind: 'real', lines: 203, badLineCount: 3 });
		expect(u.profile!.bytesPerRow).toBeCloseTo(Buffer.byteLength(text) / 200, 6);
		expect(u.badLines.map((b) => b.line)).toEqual(bad.map((b) => b.line));
		bad.forEach((b, i) => expect(u.badLines[i].message).toMatch(b.message));
		expect(u.planFields).toMatchObject({ features: 24, nnzPerRow: 3, positiveFraction: 0.25, valueKind: 'real', format: 'text', compressed: false });

		// the sample's page shows the profile and offers it to a plan, asking for the full row count
		const page = await (await editor(`/teams/${teamId}/uploads/${u.id}`)).text();
		expect(page).toContain('Rows in the sample');
		expect(page).toContain('Rows in the full dataset');
		expect(page).toContain(`name="fromUpload" value="${u.id}"`);
		const list = await (await viewer(`/teams/${teamId}/uploads`)).text();
		expect(list).toContain('clicks-sample.svm');
		expect(list).toContain('4 MiB');
	});

	it('inflates a gzip sample and reads CSV with a named label column (breast-cancer data)', async () => {
		const { text } = sampleText();
		const gz = await upload(editor, gzipSync(text), { fileName: 'clicks-sample.svm.gz' });
		expect(gz.status).toBe(202);
		const g = await parsed((await gz.json()).upload.id);
		expect(g).toMatchObject({ status: 'ready', gzip: true });
		expect(g.profile).toMatchObject({ rows: 200, maxFeature: 24, badLineCount: 3 });

		// Debian's python3-sklearn copy of the Wisconsin breast-cancer data: its first line is a count, not a header, so give it one
		const source = readFileSync('/usr/lib/python3/dist-packages/sklearn/datasets/data/breast_cancer.csv', 'utf8').split('\n');
		const header = [...Array.from({ length: 30 }, (_, i) => `f${i + 1}`), 'benign'].join(',');
		const csv = [header, ...source.slice(1)].join('\n');
		const res = await upload(editor, csv, { fileName: 'breast-cancer.csv', kind: 'csv', labelColumn: 'benign' });
		expect(res.status).toBe(202);
		const c = await parsed((await res.json()).upload.id);
		expect(c.status).toBe('ready');
		// sklearn's description of the data (descr/breast_cancer.rst): 569 instances, 30 attributes, 212 malignant (0) and 357 benign (1)
		expect(c.profile).toMatchObject({ format: 'csv', rows: 569, maxFeature: 30, valueKind: 'real', badLineCount: 0 });
		expect(c.profile!.positiveFraction).toBeCloseTo(357 / 569, 12);
	});

	it('rejects a sample with more than 5 % malformed lines, saying how many and where', async () => {
		const lines = Array.from({ length: 100 }, (_, i) => `${i % 2 ? '+1' : '-1'} 1:1 4:1`);
		for (let i = 0; i < 10; i++) lines.splice(5 + i * 10, 0, 'not a row');
		const res = await upload(editor, lines.join('\n'), { fileName: 'noisy.svm' });
		const u = await parsed((await res.json()).upload.id);
		expect(u.status).toBe('rejected');
		expect(u.error).toBe('10 of 110 lines (9.1 %) are malformed, more than the 5.0 % allowed; the first is line 6: label "not" is not +1, -1, 0 or 1');
		expect(u.badLines[0]).toEqual({ line: 6, message: 'label "not" is not +1, -1, 0 or 1' });
		// a CSV without the named label column is rejected with the header's line
		const csv = await upload(editor, 'a,b,y\n1,2,1\n', { fileName: 'x.csv', kind: 'csv', labelColumn: 'label' });
		const c = await parsed((await csv.json()).upload.id);
		expect(c.error).toMatch(/^line 1: the header has no column named "label"/);
	});

	it('refuses oversized files, gzip bombs, binary garbage and file names with folders, writing nothing outside the upload folder', async () => {
		const before = filesAround();
		const row = Buffer.from('+1 1:1 7:1\n');
		const oversized = Buffer.alloc(limit + 1, row.toString());
		const big = await upload(editor, oversized, { fileName: 'big.svm' });
		expect(big.status).toBe(413);
		const bigErr = (await big.json()).error;
		expect(bigErr).toMatchObject({ code: 'too_large', fields: { file: 'at most 4 MiB' } });
		expect(bigErr.message).toBe('The file is larger than the upload limit of 4 MiB.');

		// the same without a declared length: the byte counter stops it
		const chunks = [oversized.subarray(0, limit / 2), oversized.subarray(limit / 2)];
		const streamed = new ReadableStream({ pull: (c) => (chunks.length ? c.enqueue(chunks.shift()!) : c.close()) });
		const q = new URLSearchParams({ teamId, kind: 'svmlight', fileName: 'streamed.svm' });
		const s = await editor(`/api/uploads?${q}`, { method: 'POST', body: streamed, duplex: 'half', headers: { 'content-type': 'application/octet-stream' } } as RequestInit);
		expect(s.status).toBe(413);

		// 16 MiB of rows that gzip to a few kB
		const bomb = gzipSync(Buffer.alloc(16 * 2 ** 20, row.toString()), { level: 9 });
		expect(bomb.length).toBeLessThan(limit / 50);
		const b = await upload(editor, bomb, { fileName: 'small.svm.gz' });
		expect(b.status).toBe(413);
		expect((await b.json()).error.message).toBe('The file inflates to more than the upload limit of 4 MiB; send a smaller sample.');

		const garbage = await upload(editor, Buffer.concat([Buffer.from('+1 1:1\n'), randomBytes(64 * 1024)]), { fileName: 'garbage.bin' });
		expect(garbage.status).toBe(415);
		expect((await garbage.json()).error).toMatchObject({ code: 'binary_data', message: expect.stringMatching(/^The file holds binary data/) });

		for (const fileName of ['../../escape.svm', 'nested/rows.svm', '..\\escape.svm']) {
			const res = await upload(editor, row, { fileName });
			expect(res.status).toBe(400);
			expect((await res.json()).error.fields).toEqual({ fileName: 'fileName must be a file name without folders (no / or \\)' });
		}
		expect(filesAround()).toEqual(before);
		// every stored sample sits at <upload folder>/<team id>/<upload id>
		for (const f of filesAround().filter((f) => f.startsWith('uploads/'))) expect(f).toMatch(/^uploads\/[0-9a-f-]{36}\/[0-9a-f-]{36}$/);
	});

	it('names bad parameters, refuses viewers (403) and hides other teams (404)', async () => {
		const noLabel = await upload(editor, 'a,b\n1,2\n', { fileName: 'x.csv', kind: 'csv' });
		expect(noLabel.status).toBe(400);
		expect((await noLabel.json()).error.fields).toEqual({ labelColumn: 'labelColumn is required for CSV: the name of the column holding the labels' });
		const kind = await upload(editor, '1 1:1\n', { fileName: 'x.txt', kind: 'parquet' });
		expect((await kind.json()).error.fields).toEqual({ kind: 'kind must be one of svmlight, csv' });
		const empty = await upload(editor, '', { fileName: 'empty.svm' });
		expect(empty.status).toBe(400);

		expect((await upload(viewer, '+1 1:1\n', { fileName: 'v.svm' })).status).toBe(403);
		expect((await upload(outsider, '+1 1:1\n', { fileName: 'o.svm' })).status).toBe(404);
		const ok = await upload(editor, '+1 1:1\n-1 2:1\n', { fileName: 'mine.svm' });
		const { upload: u } = await ok.json();
		const hidden = await outsider(`/api/uploads/${u.id}`);
		expect(hidden.status).toBe(404);
		expect((await hidden.json()).error.code).toBe('not_found');
		expect((await outsider(`/teams/${teamId}/uploads/${u.id}`)).status).toBe(404);
		expect((await editor(`/api/uploads/not-an-id`)).status).toBe(404);
	});
});
