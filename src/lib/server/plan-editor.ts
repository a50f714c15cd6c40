/** What the plan editor needs besides the plan: machine choices and defaults for a new plan. */
import { MACHINE_PRESETS } from '$lib/engine/model/presets.js';
import type { Machine } from '$lib/schemas/machine.js';
import type { PlanEditor } from '$lib/schemas/plan-api.js';
import * as machines from './machines.js';

export interface MachineChoice {
	id: string;
	label: string;
	group: 'Presets' | 'Team catalog';
	machine: Machine;
}

export async function machineChoices(teamId: string): Promise<MachineChoice[]> {
	const presets: MachineChoice[] = MACHINE_PRESETS.map((p) => ({
		id: `preset:${p.id}`,
		label: p.name,
		group: 'Presets',
		machine: { name: p.name, ramGiB: p.ramGiB, diskMBps: p.diskMBps, diskInterface: p.diskInterface, cores: p.cores, coreSpeed: p.coreSpeed, pricePerHour: p.pricePerHour }
	}));
	const own: MachineChoice[] = (await machines.list(teamId)).map((m) => ({ id: `team:${m.id}`, label: m.name, group: 'Team catalog', machine: m.profile as Machine }));
	return [...own, ...presets];
}

/** A new plan starts from a mid-sized sparse dataset on a desktop-class preset. */
export function defaultPlan(choices: MachineChoice[]): PlanEditor {
	const machine = (choices.find((c) => c.id === 'preset:desktop-pcie3') ?? choices[0]).machine;
	return {
		name: '',
		dataset: { rows: 10_000_000, features: 1_000_000, nnzPerRow: 50, positiveFraction: 0.3, valueKind: 'real', format: 'binary', compressed: false },
		machine,
		training: { loss: 'hinge', C: 1, tol: 0.01, cValues: 1, folds: 1 }
	};
}
