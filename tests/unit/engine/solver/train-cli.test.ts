import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFile } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';
import { generateToFile } from '../../../../src/lib/engine/data/generate.js';

const run = promisify(execFile);
let dir = '';
let data = '';
// node with tsx's loader, as `npm run loadline` does, without npx's start-up cost
const cli = (args: string[]) => run(process.execPath, ['--import', 'tsx', 'src/cli/loadline.ts', 'train', ...args], { cwd: process.cwd() });

beforeAll(async () => {
	dir = mkdtempSync(join(tmpdir(), 'loadline-train-cli-'));
	data = join(dir, 'rows.bin');
	await generateToFile({ rows: 3000, features: 1000, nnz: 15, positive: 0.4, noise: 0.05, skew: 1, values: 'binary', seed: 4 }, data, 'bin');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('loadline train', () => {
	it('prints one JSON object with the fields the issue lists, the stream reader thread running under tsx', async () => {
		const model = join(dir, 'model.json');
		const { stdout } = await cli(['--data', data, '--loss', 'hinge', '--C', '1', '--strategy', 'stream', '--memory-mb', '1', '--model', model, '--json']);
		const r = JSON.parse(stdout);
		// field list from the issue (part 5 of issue 3)
		for (const k of ['strategy', 'loss', 'C', 'primal', 'dual', 'gap', 'epochs', 'passes', 'updates', 'cacheHitRate', 'readSeconds', 'computeSeconds', 'wallSeconds', 'peakMemoryBytes', 'accuracy']) expect(r, k).toHaveProperty(k);
		expect(r.strategy).toBe('stream');
		expect(r.gap).toBeLessThanOrEqual(0.01);
		expect(r.primal).toBeGreaterThanOrEqual(r.dual);
		const m = JSON.parse(readFileSync(model, 'utf8'));
		expect(m.bias).toBe(false);
		expect(m.w).toHaveLength(1000);
	});

	it('names the flag in its error and exits with 2', async () => {
		const err = await cli(['--data', data, '--loss', 'hinge', '--C', '0', '--strategy', 'memory']).catch((e: { code: number; stderr: string }) => e);
		expect(err).toMatchObject({ code: 2 });
		expect((err as { stderr: string }).stderr).toContain('--C must be at least');
	});
});
