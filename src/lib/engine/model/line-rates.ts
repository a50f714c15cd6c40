/**
 * Line rates of the storage and network interfaces a machine profile may name:
 * the most payload a link can carry, so no disk behind it reads faster.
 * MB/s are 1e6 bytes per second, the unit of every disk speed in Loadline.
 */

export const DISK_INTERFACES = ['sata3', 'pcie3x4', 'pcie4x4', 'pcie5x4', 'gbe1', 'gbe10', 'gbe25', 'hdd'] as const;
export type DiskInterface = (typeof DISK_INTERFACES)[number];

export interface InterfaceLimit {
	label: string;
	/** payload line rate in MB/s */
	maxMBps: number;
	/** where the limit comes from */
	source: string;
}

export const LINE_RATES: Record<DiskInterface, InterfaceLimit> = {
	// SATA revision 3.0: 6 Gb/s on the wire, 8b/10b coding → 6e9 × 8/10 / 8 = 600 MB/s
	sata3: { label: 'SATA 6 Gb/s', maxMBps: (6e9 * (8 / 10)) / 8 / 1e6, source: 'SATA revision 3.0' },
	// PCI Express 3.0: 8 GT/s per lane, 128b/130b coding → 8e9 × 128/130 / 8 × 4 lanes ≈ 3938 MB/s
	pcie3x4: { label: 'PCIe 3.0 ×4', maxMBps: ((8e9 * (128 / 130)) / 8 / 1e6) * 4, source: 'PCI Express Base Specification 3.0' },
	// PCI Express 4.0: 16 GT/s per lane, 128b/130b coding → ≈ 7877 MB/s for ×4
	pcie4x4: { label: 'PCIe 4.0 ×4', maxMBps: ((16e9 * (128 / 130)) / 8 / 1e6) * 4, source: 'PCI Express Base Specification 4.0' },
	// PCI Express 5.0: 32 GT/s per lane, 128b/130b coding → ≈ 15754 MB/s for ×4
	pcie5x4: { label: 'PCIe 5.0 ×4', maxMBps: ((32e9 * (128 / 130)) / 8 / 1e6) * 4, source: 'PCI Express Base Specification 5.0' },
	// 1000BASE-T (IEEE 802.3ab): 1 Gb/s of payload bits → 125 MB/s before protocol overhead
	gbe1: { label: '1 Gb Ethernet', maxMBps: 1e9 / 8 / 1e6, source: 'IEEE 802.3ab (1000BASE-T)' },
	// 10GBASE-T (IEEE 802.3an): 10 Gb/s → 1250 MB/s before protocol overhead
	gbe10: { label: '10 Gb Ethernet', maxMBps: 10e9 / 8 / 1e6, source: 'IEEE 802.3an (10GBASE-T)' },
	// 25GBASE-R (IEEE 802.3by): 25 Gb/s of data after 64b/66b coding → 3125 MB/s
	gbe25: { label: '25 Gb Ethernet', maxMBps: 25e9 / 8 / 1e6, source: 'IEEE 802.3by (25GBASE-R)' },
	// spinning disks stream 100–250 MB/s on outer tracks; 300 leaves headroom (common practice, no source)
	hdd: { label: 'spinning disk', maxMBps: 300, source: 'common practice, no source' }
};
