/**
 * Self-measurement of the machine this runs on: sequential read speed of a fresh file with the
 * page cache bypassed where the OS allows, and the engine's per-update cost (relative core speed).
 */
import { spawnSync } from 'node:child_process';
import { closeSync, fsyncSync, mkdtempSync, openSync, readSync, rmSync, writeSync, writeFileSync } from 'node:fs';
import { cpus, platform, tmpdir, totalmem } from 'node:os';
import { join } from 'node:path';
import { randomFillSync } from 'node:crypto';
import { DISK_INTERFACES, LINE_RATES, type DiskInterface } from '../model/line-rates.js';
import { GiB } from '../model/sizes.js';
import { measureCoreSpeed, REFERENCE_KERNEL } from './kernel.js';
import type { MachineProbe } from '../../schemas/machine.js';

export interface ProbeOptions {
	/** bytes of the temporary file; default 512 MiB */
	bytes?: number;
	/** folder on the disk to measure; default the OS temp dir */
	dir?: string;
	/** allow dropping the whole page cache when root and O_DIRECT is unavailable (affects every process); default false */
	dropCaches?: boolean;
	/** interface to report; default the slowest one whose line rate covers the measured speed */
	diskInterface?: DiskInterface;
}

const BLOCK = 8 << 20;

function writeFresh(path: string, bytes: number): void {
	const buf = Buffer.allocUnsafe(BLOCK);
	randomFillSync(buf);
	const fd = openSync(path, 'w');
	try {
		for (let done = 0; done < bytes; done += BLOCK) writeSync(fd, buf, 0, Math.min(BLOCK, bytes - done));
		fsyncSync(fd);
	} finally {
		closeSync(fd);
	}
}

function readPlain(path: string): number {
	const buf = Buffer.allocUnsafe(BLOCK);
	const fd = openSync(path, 'r');
	const t = performance.now();
	let total = 0;
	try {
		for (let n; (n = readSync(fd, buf, 0, BLOCK, null)) > 0; ) total += n;
	} finally {
		closeSync(fd);
	}
	return total / ((performance.now() - t) / 1000);
}

/** O_DIRECT through dd (Node cannot promise the buffer alignment O_DIRECT needs). */
function readDirect(path: string, bytes: number): number | null {
	if (platform() !== 'linux') return null;
	const t = performance.now();
	const r = spawnSync('dd', [`if=${path}`, 'of=/dev/null', `bs=${BLOCK}`, 'iflag=direct'], { stdio: ['ignore', 'ignore', 'pipe'] });
	if (r.status !== 0) return null;
	return bytes / ((performance.now() - t) / 1000);
}

function dropCaches(): boolean {
	try {
		spawnSync('sync');
		writeFileSync('/proc/sys/vm/drop_caches', '1\n');
		return true;
	} catch {
		return false;
	}
}

export function guessInterface(mbps: number): DiskInterface {
	// a spinning disk cannot be told from a slow SSD by speed alone, so hdd is never guessed
	const order: DiskInterface[] = ['sata3', 'pcie3x4', 'pcie4x4', 'pcie5x4'];
	return order.find((i) => LINE_RATES[i].maxMBps >= mbps) ?? 'pcie5x4';
}

export function probeMachine(opts: ProbeOptions = {}): MachineProbe {
	const bytes = Math.max(BLOCK, Math.round((opts.bytes ?? 512 * 2 ** 20) / BLOCK) * BLOCK);
	const dir = mkdtempSync(join(opts.dir ?? tmpdir(), 'loadline-probe-'));
	const file = join(dir, 'probe.bin');
	let bps: number;
	let method: string;
	let bypassed: boolean;
	try {
		writeFresh(file, bytes);
		const direct = readDirect(file, bytes);
		if (direct !== null) {
			bps = direct;
			method = `fresh ${bytes / 2 ** 20} MiB file written and fsynced, read once with O_DIRECT (dd iflag=direct, ${BLOCK / 2 ** 20} MiB requests)`;
			bypassed = true;
		} else if (opts.dropCaches && dropCaches()) {
			bps = readPlain(file);
			method = `fresh ${bytes / 2 ** 20} MiB file written and fsynced, page cache dropped (/proc/sys/vm/drop_caches), read once sequentially`;
			bypassed = true;
		} else {
			bps = readPlain(file);
			method = `fresh ${bytes / 2 ** 20} MiB file read right after writing; the page cache was not bypassed, so the speed is an upper bound`;
			bypassed = false;
		}
	} finally {
		rmSync(dir, { recursive: true, force: true });
	}
	const core = measureCoreSpeed(0.5);
	const measuredMBps = bps / 1e6;
	const diskInterface = opts.diskInterface ?? guessInterface(measuredMBps);
	if (!DISK_INTERFACES.includes(diskInterface)) throw new RangeError(`diskInterface must be one of ${DISK_INTERFACES.join(', ')}`);
	const cpu = cpus();
	return {
		kind: 'loadline-machine-probe',
		machine: {
			name: 'this machine (probed)',
			ramGiB: Math.max(1, Math.floor((totalmem() / GiB) * 10) / 10),
			// a profile may not claim more than its interface carries
			diskMBps: Math.round(Math.min(measuredMBps, LINE_RATES[diskInterface].maxMBps) * 10) / 10,
			diskInterface,
			cores: cpu.length,
			coreSpeed: Math.min(20, Math.round(core.coreSpeed * 1000) / 1000)
		},
		measured: {
			date: new Date().toISOString(),
			cpuModel: cpu[0]?.model?.trim() ?? 'unknown',
			node: process.version,
			platform: `${platform()} ${process.arch}`,
			readMBps: measuredMBps,
			readMethod: method,
			cacheBypassed: bypassed,
			readBytes: bytes,
			interfaceGuessed: opts.diskInterface === undefined,
			nsPerNnz: core.nsPerUpdate / REFERENCE_KERNEL.nnzPerRow,
			nsPerUpdate: core.nsPerUpdate,
			kernel: `k = ${REFERENCE_KERNEL.nnzPerRow}, d = ${REFERENCE_KERNEL.features} (weights ${(REFERENCE_KERNEL.features * 8) / 1024} KiB), real values`
		}
	};
}
