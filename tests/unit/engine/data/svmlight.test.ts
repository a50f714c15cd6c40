import { afterAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { existsSync, mkdtempSync, writeFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseSvmlight, parseSvmlightFile, TextRowError } from '../../../../src/lib/engine/data/svmlight.js';

const dir = mkdtempSync(join(tmpdir(), 'loadline-svm-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function errorOf(text: string): string {
	try {
		parseSvmlight(text);
	} catch (err) {
		if (err instanceof TextRowError) return err.message;
		throw err;
	}
	throw new Error('no error');
}

// Format rules from the SVMlight file format description (T. Joachims, svmlight.joachims.org):
// "<line> .=. <target> <feature>:<value> ... <feature>:<value> # <info>", features in increasing
// order, feature numbers starting at 1; "qid:<value>" may follow the target.
describe('svmlight parser: malformed lines give line-numbered errors', () => {
	const cases: [string, string, string][] = [
		['index 0', '+1 1:1 3:1\n-1 0:1\n', 'line 2: feature index 0 (indices are 1-based)'],
		['descending index', '+1 3:1 2:1\n', 'line 1: feature index 2 after 3 (indices must be ascending)'],
		['repeated index', '-1 3:1 3:0.5\n', 'line 1: feature index 3 after 3 (indices must be ascending)'],
		['label 2', '2 1:1\n', 'line 1: label "2" is not +1, -1, 0 or 1'],
		['label word', 'yes 1:1\n', 'line 1: label "yes" is not +1, -1, 0 or 1'],
		['missing label', '1:1 2:1\n', 'line 1: label "1:1" is not +1, -1, 0 or 1'],
		['index not a number', '+1 a:1\n', 'line 1: feature index "a" is not a whole number'],
		['fractional index', '+1 1.5:1\n', 'line 1: feature index "1.5" is not a whole number'],
		['negative index', '+1 -3:1\n', 'line 1: feature index "-3" is not a whole number'],
		['value not a number', '+1 1:x\n', 'line 1: value "x" of feature 1 is not a number'],
		['empty value', '+1 4:\n', 'line 1: value "" of feature 4 is not a number'],
		['hex value', '+1 2:0x10\n', 'line 1: value "0x10" of feature 2 is not a number'],
		['two dots', '+1 2:1.2.3\n', 'line 1: value "1.2.3" of feature 2 is not a number'],
		['NaN value', '+1 1:0.5 7:nan\n', 'line 1: value "nan" of feature 7 is not finite'],
		['Inf value', '+1 7:inf\n', 'line 1: value "inf" of feature 7 is not finite'],
		['-Infinity value', '+1 7:-Infinity\n', 'line 1: value "-Infinity" of feature 7 is not finite'],
		['f32 overflow', '+1 7:1e39\n', 'line 1: value "1e39" of feature 7 is too large for a 32-bit float'],
		['double overflow', '+1 7:1e999\n', 'line 1: value "1e999" of feature 7 is too large for a 32-bit float'],
		['no colon', '+1 5\n', 'line 1: "5" is not index:value'],
		['index too large', '+1 4294967296:1\n', 'line 1: feature index 4294967296 is above 4294967295'],
		['qid after a feature', '+1 1:1 qid:3\n', 'line 1: feature index "qid" is not a whole number'],
		['line count includes comments and blanks', '# header\n\n+1 1:1\n-1 2:1 2:1', 'line 4: feature index 2 after 2 (indices must be ascending)'],
		['CRLF lines', '+1 1:1\r\n-1 0:1\r\n', 'line 2: feature index 0 (indices are 1-based)']
	];
	for (const [name, text, message] of cases) {
		it(name, () => {
			expect(errorOf(text)).toBe(message);
		});
	}

	it('empty file', () => {
		expect(errorOf('')).toBe('no rows: the file is empty');
	});

	it('only comments and blank lines', () => {
		expect(errorOf('# a comment\n\n   \n# another\n')).toBe('no rows: the file holds only comments and blank lines');
	});

	it('the error carries its line number', () => {
		try {
			parseSvmlight('+1 1:1\n+1 1:1\n+1 0:1\n');
		} catch (err) {
			expect((err as TextRowError).line).toBe(3);
		}
	});

	// Reference: Debian's liblinear-tools (liblinear-train) rejects the same lines; its
	// "Wrong input format at line N" must name the same line as ours.
	const liblinear = '/usr/bin/liblinear-train';
	it.skipIf(!existsSync(liblinear))('liblinear-train rejects index 0, non-ascending indices and non-numbers at the same line', () => {
		const shared: [string, number][] = [
			['+1 1:1\n-1 0:1\n', 2],
			['+1 1:1\n+1 2:1\n-1 3:1 2:1\n', 3],
			['+1 1:1\n+1 a:1\n', 2],
			['+1 1:x\n', 1]
		];
		for (const [text, line] of shared) {
			expect(errorOf(text)).toMatch(new RegExp(`^line ${line}: `));
			const file = join(dir, `bad-${line}.svm`);
			writeFileSync(file, text);
			let output = '';
			try {
				execFileSync(liblinear, ['-q', file, join(dir, 'bad.model')], { stdio: 'pipe' });
			} catch (err) {
				output = String((err as { stdout?: Buffer }).stdout ?? '') + String((err as { stderr?: Buffer }).stderr ?? '');
			}
			expect(output).toContain(`Wrong input format at line ${line}`);
		}
	});
});

describe('svmlight parser: accepted rows', () => {
	it('labels +1, -1, 1, 0 and 1.0; comments; qid after the label; no final newline', () => {
		const { rows, profile } = parseSvmlight('# head\n+1 qid:3 1:0.5 3:2 # tail\n0 2:1e-3\n\n1.0 5:1\n-1\t2:-4.25\n-1');
		expect(Array.from(rows.labels)).toEqual([1, -1, 1, -1, -1]);
		expect(Array.from(rows.rowPtr)).toEqual([0, 2, 3, 4, 5, 5]);
		expect(Array.from(rows.indices)).toEqual([0, 2, 1, 4, 1]);
		expect(Array.from(rows.values!)).toEqual([0.5, 2, Math.fround(1e-3), 1, -4.25]);
		expect(rows.d).toBe(5);
		expect(profile.rows).toBe(5);
		expect(profile.maxFeature).toBe(5);
		expect(profile.valueKind).toBe('real');
		expect(profile.positiveFraction).toBeCloseTo(2 / 5, 12);
		expect(profile.nnzMean).toBeCloseTo(1, 12);
	});

	it('decimal forms parse to the nearest f32, like Number()', () => {
		const forms = ['0.1', '.5', '5.', '-0.000123', '1E+2', '3.4028234e38', '123456789012345678', '0.30000000000000004', '7e-30'];
		const text = forms.map((v, i) => `+1 ${i + 1}:${v}`).join('\n');
		const { rows } = parseSvmlight(text);
		expect(Array.from(rows.values!)).toEqual(forms.map((v) => Math.fround(Number(v))));
	});

	it('a UTF-8 byte order mark before the first label is skipped', () => {
		const { rows } = parseSvmlight('\uFEFF+1 2:1\n-1 1:1\n');
		expect(Array.from(rows.labels)).toEqual([1, -1]);
	});

	it('binary values give a binary profile and null values', () => {
		const { rows, profile } = parseSvmlight('+1 1:1 2:1\n-1 3:1\n');
		expect(profile.valueKind).toBe('binary');
		expect(rows.values).toBeNull();
		expect(profile.nnzStd).toBeCloseTo(0.5, 12);
	});

	it('a file read in tiny pieces parses like the whole text', async () => {
		const lines: string[] = [];
		for (let i = 0; i < 300; i++) lines.push(`${i % 3 ? '+1' : '-1'} ${i + 1}:${(i % 7) / 4} ${i + 1000}:1 # r${i}`);
		const text = lines.join('\n') + '\n';
		const file = join(dir, 'pieces.svm');
		writeFileSync(file, text);
		const whole = parseSvmlight(text);
		const seen: number[] = [];
		const profile = await parseSvmlightFile(file, { readBytes: 37, batchRows: 64, onBatch: (b) => seen.push(b.firstRow, b.n) });
		expect(profile).toEqual({ ...whole.profile });
		expect(seen).toEqual([0, 64, 64, 64, 128, 64, 192, 64, 256, 44]);
	});

	it('a file error names the line', async () => {
		const file = join(dir, 'bad.svm');
		writeFileSync(file, '+1 1:1\n'.repeat(1000) + '+1 2:1 1:1\n');
		await expect(parseSvmlightFile(file, { readBytes: 100 })).rejects.toThrow('line 1001: feature index 1 after 2 (indices must be ascending)');
	});
});
