import { describe, expect, it } from 'vitest';
import { parsePlan } from '../../../src/lib/schemas/plan.js';
import { aPlan } from './plan-factory.js';

type Section = 'dataset' | 'machine' | 'training' | 'top';

/** [section, field, failing value, exact message, passing value] for every bound in issue 4 part 1 */
const bounds: [Section, string, unknown, string, unknown][] = [
	['dataset', 'rows', 0, 'dataset.rows must be at least 1', 1],
	['dataset', 'rows', 1.5, 'dataset.rows must be a whole number', 2],
	['dataset', 'features', 0, 'dataset.features must be at least 1', 40],
	['dataset', 'nnzPerRow', 0, 'dataset.nnzPerRow must be greater than 0', 0.5],
	['dataset', 'nnzPerRow', 100_001, 'dataset.nnzPerRow must be at most dataset.features', 100_000],
	['dataset', 'positiveFraction', 0, 'dataset.positiveFraction must be greater than 0', 0.001],
	['dataset', 'positiveFraction', 1, 'dataset.positiveFraction must be less than 1', 0.999],
	['dataset', 'valueKind', 'float', 'dataset.valueKind must be one of binary, real', 'binary'],
	['dataset', 'format', 'csv', 'dataset.format must be one of text, binary', 'text'],
	['dataset', 'bytesOnDisk', 0, 'dataset.bytesOnDisk must be at least 1', 1],
	['machine', 'ramGiB', 0.5, 'machine.ramGiB must be at least 1', 1],
	['machine', 'diskMBps', 0, 'machine.diskMBps must be greater than 0', 0.1],
	// SATA revision 3.0: 6 Gb/s with 8b/10b coding → 600 MB/s of payload
	['machine', 'diskMBps', 601, 'machine.diskMBps must be at most 600, the line rate of SATA 6 Gb/s (sata3)', 600],
	['machine', 'cores', 0, 'machine.cores must be at least 1', 1],
	['machine', 'coreSpeed', 0, 'machine.coreSpeed must be greater than 0', 0.01],
	['machine', 'coreSpeed', 20.5, 'machine.coreSpeed must be at most 20', 20],
	['machine', 'pricePerHour', -1, 'machine.pricePerHour must be at least 0', 0],
	['training', 'C', 0, 'training.C must be greater than 0', 1e-4],
	['training', 'tol', 0, 'training.tol must be greater than 0', 1e-6],
	['training', 'tol', 1, 'training.tol must be less than 1', 0.5],
	['training', 'loss', 'squared', 'training.loss must be one of hinge, sqhinge, logistic', 'logistic'],
	['training', 'cValues', 0, 'training.cValues must be at least 1', 1],
	['training', 'folds', 0, 'training.folds must be at least 1', 1],
	['top', 'deadlineHours', 0, 'deadlineHours must be greater than 0', 8]
];

function withField(section: Section, field: string, value: unknown): unknown {
	const plan = aPlan() as unknown as Record<string, Record<string, unknown>>;
	if (section === 'top') return { ...plan, [field]: value };
	return { ...plan, [section]: { ...plan[section], [field]: value } };
}

describe('plan schema bounds', () => {
	it.each(bounds)('%s.%s = %j fails with its message', (section, field, bad, message) => {
		const r = parsePlan(withField(section, field, bad));
		expect(r.ok).toBe(false);
		if (!r.ok) expect(r.errors).toContainEqual({ path: section === 'top' ? field : `${section}.${field}`, message });
	});

	it.each(bounds)('%s.%s passes at its bound (%j fails, %j passes)', (section, field, _bad, _message, good) => {
		const r = parsePlan(withField(section, field, good));
		expect(r.ok ? [] : r.errors).toEqual([]);
	});

	it('checks disk speed against the chosen interface, not one global limit', () => {
		// PCI Express 4.0 ×4: 16 GT/s per lane, 128b/130b → 16e9·128/130/8·4 ≈ 7877 MB/s
		expect(parsePlan(withField('machine', 'diskInterface', 'pcie4x4')).ok).toBe(true);
		const fast = aPlan({ machine: { diskInterface: 'pcie4x4', diskMBps: 7800 } });
		expect(parsePlan(fast).ok).toBe(true);
		const r = parsePlan(aPlan({ machine: { diskInterface: 'gbe1', diskMBps: 126 } }));
		// 1000BASE-T (IEEE 802.3ab): 1e9 / 8 = 125 MB/s
		expect(r.ok ? [] : r.errors).toEqual([{ path: 'machine.diskMBps', message: 'machine.diskMBps must be at most 125, the line rate of 1 Gb Ethernet (gbe1)' }]);
	});

	it('names missing fields, unknown fields and broken JSON', () => {
		const plan = aPlan() as unknown as Record<string, Record<string, unknown>>;
		const { cores: _c, ...machine } = plan.machine;
		const r = parsePlan({ ...plan, machine, dataset: { ...plan.dataset, nnzPerrow: 3 } });
		expect(r.ok ? [] : r.errors).toEqual([
			{ path: 'dataset', message: 'dataset.nnzPerrow is not a plan field' },
			{ path: 'machine.cores', message: 'machine.cores is required' }
		]);
		const r2 = parsePlan({ dataset: plan.dataset, machine: 'big' });
		expect(r2.ok ? [] : r2.errors).toEqual([
			{ path: 'machine', message: 'machine must be an object' },
			{ path: 'training', message: 'training is required' }
		]);
		const r3 = parsePlan('{"dataset":');
		expect(r3.ok).toBe(false);
		if (!r3.ok) expect(r3.errors[0].message).toMatch(/^plan is not valid JSON/);
		const r4 = parsePlan(withField('dataset', 'rows', '5'));
		expect(r4.ok ? [] : r4.errors).toEqual([{ path: 'dataset.rows', message: 'dataset.rows must be a number' }]);
	});
});
