/**
 * Machine presets: generic hardware classes for plans, never vendor or instance names.
 * Disk speeds are sustained sequential reads at or below the interface's line rate
 * (see line-rates.ts); hourly prices are illustrative only.
 */
import type { DiskInterface } from './line-rates.js';

export interface MachinePreset {
	id: string;
	name: string;
	ramGiB: number;
	diskMBps: number;
	diskInterface: DiskInterface;
	cores: number;
	/** single-core speed relative to the reference core (see model/scale.ts) */
	coreSpeed: number;
	/** illustrative price in currency units per hour */
	pricePerHour: number;
}

export const MACHINE_PRESETS: readonly MachinePreset[] = [
	{ id: 'laptop-sata', name: 'laptop, SATA SSD', ramGiB: 16, diskMBps: 520, diskInterface: 'sata3', cores: 4, coreSpeed: 1, pricePerHour: 0.05 },
	{ id: 'desktop-pcie3', name: 'desktop, PCIe 3.0 NVMe', ramGiB: 32, diskMBps: 3300, diskInterface: 'pcie3x4', cores: 8, coreSpeed: 1.2, pricePerHour: 0.15 },
	{ id: 'workstation-pcie4', name: 'workstation, PCIe 4.0 NVMe', ramGiB: 64, diskMBps: 6800, diskInterface: 'pcie4x4', cores: 16, coreSpeed: 1.4, pricePerHour: 0.4 },
	{ id: 'server-10gbe', name: 'server, network storage 10GbE', ramGiB: 256, diskMBps: 1100, diskInterface: 'gbe10', cores: 32, coreSpeed: 1, pricePerHour: 2.4 },
	{ id: 'small-vm-1gbe', name: 'small virtual machine, network storage 1GbE', ramGiB: 8, diskMBps: 115, diskInterface: 'gbe1', cores: 2, coreSpeed: 0.8, pricePerHour: 0.08 },
	{ id: 'archive-hdd', name: 'archive box, spinning disk', ramGiB: 32, diskMBps: 180, diskInterface: 'hdd', cores: 8, coreSpeed: 0.9, pricePerHour: 0.12 }
];

/** A preset by id, or undefined. */
export function findPreset(id: string): MachinePreset | undefined {
	return MACHINE_PRESETS.find((p) => p.id === id);
}
