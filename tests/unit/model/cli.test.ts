import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { aPlan } from './plan-factory.js';
import { aRecord } from './record-factory.js';
import { probeMachine, guessInterface } from '../../../src/lib/engine/calibrate/probe.js';
import { machineProbeSchema, machineSchema } from '../../../src/lib/schemas/machine.js';

const loadline = (...args: string[]) => spawnSync(process.execPath, ['--import', 'tsx', 'src/cli/loadline.ts', ...args], { encoding: 'utf8' });

describe('loadline estimate', () => {
	const dir = mkdtempSync(join(tmpdir(), 'loadline-estimate-'));
	const cal = join(dir, 'cal.json');
	writeFileSync(cal, JSON.stringify(aRecord()));

	it('prints the estimate object for a valid plan', () => {
		const plan = join(dir, 'plan.json');
		writeFileSync(plan, JSON.stringify(aPlan({ machine: { pricePerHour: 1 } })));
		const r = loadline('estimate', '--plan', plan, '--calibration', cal, '--json');
		expect(r.status, r.stderr).toBe(0);
		const out = JSON.parse(r.stdout);
		expect(out.strategies.map((s: { strategy: string }) => s.strategy)).toEqual(['memory', 'block', 'selective', 'stream']);
		for (const key of ['strategy', 'feasible', 'reason', 'passes', 'epochs', 'cacheHitRate', 'wallSeconds', 'breakdown', 'peakMemoryBytes', 'cost']) expect(out.strategies[0]).toHaveProperty(key);
		expect(Object.keys(out.strategies[0].wallSeconds)).toEqual(['p10', 'p50', 'p90']);
		expect(out).toHaveProperty('recommended');
		expect(out.extrapolation.factor).toBeGreaterThan(1);
	});

	it('exits non-zero naming the field of an invalid plan', () => {
		const plan = join(dir, 'bad.json');
		writeFileSync(plan, JSON.stringify(aPlan({ dataset: { features: 10, nnzPerRow: 40 } })));
		const r = loadline('estimate', '--plan', plan, '--calibration', cal);
		expect(r.status).toBe(2);
		expect(r.stderr).toContain('dataset.nnzPerRow must be at most dataset.features');
		expect(r.stderr).not.toMatch(/\n\s+at /);
		rmSync(dir, { recursive: true, force: true });
	});
});

describe('probe-machine', () => {
	it('measures a fresh file and yields a profile the machine schema accepts', () => {
		const p = probeMachine({ bytes: 16 * 2 ** 20 });
		expect(machineProbeSchema.safeParse(p).success).toBe(true);
		expect(machineSchema.safeParse(p.machine).success).toBe(true);
		expect(p.measured.readMBps).toBeGreaterThan(0);
		expect(p.measured.readMethod).toMatch(p.measured.cacheBypassed ? /O_DIRECT|drop_caches/ : /not bypassed/);
		expect(p.measured.nsPerNnz).toBeGreaterThan(0);
	});

	it('guesses the slowest interface that carries the measured speed', () => {
		// SATA revision 3.0 carries 600 MB/s; PCI Express 3.0 ×4 about 3938 MB/s
		expect(guessInterface(550)).toBe('sata3');
		expect(guessInterface(601)).toBe('pcie3x4');
		expect(guessInterface(3939)).toBe('pcie4x4');
	});
});
