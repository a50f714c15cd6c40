import { afterAll, describe, expect, it, vi } from 'vitest';
import { mkdtempSync, writeFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { gen } from '../../../../src/cli/commands/gen.js';
import { convert } from '../../../../src/cli/commands/convert.js';
import { profile } from '../../../../src/cli/commands/profile.js';
import { CliError } from '../../../../src/cli/args.js';

const dir = mkdtempSync(join(tmpdir(), 'loadline-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Run a command, returning what it printed on stdout. */
async function run(cmd: { run(argv: string[]): Promise<number | void> }, argv: string[]): Promise<string> {
	const out: string[] = [];
	const spy = vi.spyOn(console, 'log').mockImplementation((...a: unknown[]) => void out.push(a.join(' ')));
	try {
		await cmd.run(argv);
	} finally {
		spy.mockRestore();
	}
	return out.join('\n');
}

async function cliError(cmd: { run(argv: string[]): Promise<number | void> }, argv: string[]): Promise<string> {
	try {
		await run(cmd, argv);
	} catch (err) {
		if (err instanceof CliError) return err.message;
		throw err;
	}
	throw new Error('no error');
}

describe('loadline gen / convert / profile', () => {
	it('gen → convert → profile agree, in JSON', async () => {
		const svm = join(dir, 'a.svm');
		const bin = join(dir, 'a.bin');
		const genProfile = JSON.parse(await run(gen, ['--rows', '3000', '--features', '500', '--nnz', '12', '--positive', '0.3', '--values', 'real', '--seed', '9', '--out', svm, '--json']));
		expect(genProfile).toMatchObject({ rows: 3000, format: 'svm', valueKind: 'real' });
		const conv = JSON.parse(await run(convert, [svm, bin, '--json']));
		expect(conv.header).toMatchObject({ n: 3000, version: 1, valueKind: 'real' });
		const binProfile = JSON.parse(await run(profile, [bin, '--json']));
		const textProfile = JSON.parse(await run(profile, [svm, '--json']));
		expect(textProfile).toEqual(genProfile);
		expect({ ...binProfile, bytes: 0, bytesPerRow: 0, format: '' }).toEqual({ ...textProfile, bytes: 0, bytesPerRow: 0, format: '' });
		expect(binProfile.positiveFraction).toBeGreaterThan(0.27);
		expect(binProfile.positiveFraction).toBeLessThan(0.33);
	});

	it('gen picks the binary form from a .bin name', async () => {
		const bin = join(dir, 'b.bin');
		expect(JSON.parse(await run(gen, ['--rows', '10', '--features', '50', '--nnz', '5', '--out', bin, '--json'])).format).toBe('bin');
	});

	it('errors name the flag or the line', async () => {
		expect(await cliError(gen, ['--rows', '10'])).toBe('--out is required');
		expect(await cliError(gen, ['--rows', 'ten', '--out', join(dir, 'x')])).toBe('--rows must be a number, got "ten"');
		expect(await cliError(gen, ['--rows', '1.5', '--out', join(dir, 'x')])).toBe('--rows must be a whole number, got "1.5"');
		expect(await cliError(gen, ['--values', 'int', '--out', join(dir, 'x')])).toBe('--values must be one of binary, real, got "int"');
		expect(await cliError(gen, ['--noise', '0.6', '--out', join(dir, 'x')])).toBe('--noise: must be at least 0 and below 0.5, got 0.6');
		expect(await cliError(gen, ['--nnz', '80', '--features', '40', '--out', join(dir, 'x')])).toBe('--nnz: must be from 1 to features (40), got 80');
		expect(await cliError(gen, ['--nnz-spread=-1', '--out', join(dir, 'x')])).toBe('--nnz-spread must be at least 0, got -1');
		expect(await cliError(gen, ['--bogus', '1'])).toMatch(/bogus/);
		const bad = join(dir, 'bad.svm');
		writeFileSync(bad, '+1 1:1\n-1 2:nan\n');
		expect(await cliError(convert, [bad, join(dir, 'bad.bin')])).toBe(`${bad}: line 2: value "nan" of feature 2 is not finite`);
		expect(await cliError(convert, [bad])).toBe('expects IN and OUT, got 1 path');
		expect(await cliError(profile, [join(dir, 'missing.svm')])).toBe(`file "${join(dir, 'missing.svm')}" not found`);
		const empty = join(dir, 'empty.svm');
		writeFileSync(empty, '');
		expect(await cliError(profile, [empty])).toBe(`${empty}: no rows: the file is empty`);
	});
});
