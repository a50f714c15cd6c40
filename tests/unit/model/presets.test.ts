import { describe, expect, it } from 'vitest';
import { LINE_RATES } from '../../../src/lib/engine/model/line-rates.js';
import { MACHINE_PRESETS } from '../../../src/lib/engine/model/presets.js';
import { machineSchema } from '../../../src/lib/schemas/machine.js';

describe('interface line rates', () => {
	it('match the standards', () => {
		// SATA revision 3.0: 6 Gb/s, 8b/10b coding → 600 MB/s
		expect(LINE_RATES.sata3.maxMBps).toBeCloseTo(600, 6);
		// PCI Express Base Specification 3.0: 8 GT/s per lane, 128b/130b → ≈ 3.94 GB/s for ×4
		expect(LINE_RATES.pcie3x4.maxMBps).toBeCloseTo(3938.46, 1);
		// PCI Express Base Specification 4.0: 16 GT/s per lane, 128b/130b → ≈ 7.88 GB/s for ×4
		expect(LINE_RATES.pcie4x4.maxMBps).toBeCloseTo(7876.92, 1);
		// IEEE 802.3ab 1000BASE-T: 1 Gb/s → 125 MB/s
		expect(LINE_RATES.gbe1.maxMBps).toBe(125);
		// IEEE 802.3an 10GBASE-T: 10 Gb/s → 1.25 GB/s
		expect(LINE_RATES.gbe10.maxMBps).toBe(1250);
	});
});

describe('machine presets', () => {
	it.each(MACHINE_PRESETS.map((p) => [p.name, p] as const))('%s reads no faster than its interface allows', (_name, p) => {
		const limits: Record<string, number> = {
			sata3: 600, // SATA revision 3.0: 6 Gb/s with 8b/10b coding
			pcie3x4: 3938.46, // PCI Express 3.0: 8 GT/s × 4 lanes with 128b/130b coding
			pcie4x4: 7876.92, // PCI Express 4.0: 16 GT/s × 4 lanes with 128b/130b coding
			pcie5x4: 15753.85, // PCI Express 5.0: 32 GT/s × 4 lanes with 128b/130b coding
			gbe1: 125, // IEEE 802.3ab 1000BASE-T
			gbe10: 1250, // IEEE 802.3an 10GBASE-T
			gbe25: 3125, // IEEE 802.3by 25GBASE-R
			hdd: 250 // spinning disks stream 100–250 MB/s (common practice, no source)
		};
		expect(p.diskMBps).toBeLessThanOrEqual(limits[p.diskInterface]);
		if (p.diskInterface === 'hdd') expect(p.diskMBps).toBeGreaterThanOrEqual(100); // common practice, no source
		const { id: _id, ...machine } = p;
		expect(machineSchema.safeParse(machine).success).toBe(true);
	});

	it('covers SATA, both NVMe generations, both Ethernet speeds and a spinning disk', () => {
		const kinds = new Set(MACHINE_PRESETS.map((p) => p.diskInterface));
		for (const k of ['sata3', 'pcie3x4', 'pcie4x4', 'gbe1', 'gbe10', 'hdd']) expect(kinds.has(k as never)).toBe(true);
	});

	it('uses generic class names, not products', () => {
		for (const p of MACHINE_PRESETS) expect(p.name).toMatch(/^(laptop|desktop|workstation|server|small virtual machine|archive box), /);
	});
});
