/** A valid plan to start test cases from; override sections as needed. */
import type { Plan } from '../../../src/lib/schemas/plan.js';

export function aPlan(over: { dataset?: Partial<Plan['dataset']>; machine?: Partial<Plan['machine']>; training?: Partial<Plan['training']>; deadlineHours?: number } = {}): Plan {
	return {
		dataset: { rows: 1_000_000, features: 100_000, nnzPerRow: 40, positiveFraction: 0.3, valueKind: 'real', format: 'binary', compressed: false, ...over.dataset },
		machine: { ramGiB: 16, diskMBps: 500, diskInterface: 'sata3', cores: 4, coreSpeed: 1, ...over.machine },
		training: { loss: 'hinge', C: 1, tol: 0.01, cValues: 1, folds: 1, ...over.training },
		...(over.deadlineHours !== undefined ? { deadlineHours: over.deadlineHours } : {})
	};
}
