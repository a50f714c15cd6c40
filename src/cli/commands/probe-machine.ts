/** `loadline probe-machine`: measure this machine and print a machine profile the web app accepts. */
import { CliError, choiceFlag, numberFlag, parseFlags, type Command } from '../args.js';
import { probeMachine } from '../../lib/engine/calibrate/probe.js';
import { DISK_INTERFACES } from '../../lib/engine/model/line-rates.js';
import { machineProbeSchema } from '../../lib/schemas/machine.js';

const help = `loadline probe-machine [--json] [options]

Measure the sequential read speed of a fresh temporary file (page cache bypassed with O_DIRECT
where the OS allows; the output says how it was read) and the engine's per-update cost, and
print a machine profile for plans.

  --json               print the profile as JSON (upload it in the web app)
  --size-mb M          size of the temporary file in MiB (default 512)
  --dir DIR            folder on the disk to measure (default the OS temp dir)
  --interface I        disk interface to report (${DISK_INTERFACES.join(', ')}; default: guessed from the speed)
  --drop-caches        when O_DIRECT fails and running as root, drop the whole page cache (affects every process)`;

export const probeMachineCommand: Command = {
	summary: 'measure this machine (disk read speed, core speed) as a machine profile',
	help,
	async run(argv) {
		const { values: f } = parseFlags(argv, {
			json: { type: 'boolean' },
			'size-mb': { type: 'string' },
			dir: { type: 'string' },
			interface: { type: 'string' },
			'drop-caches': { type: 'boolean' }
		});
		const sizeMb = numberFlag(f['size-mb'], 'size-mb', { default: 512, min: 8, max: 1 << 20 });
		const diskInterface = f.interface === undefined ? undefined : choiceFlag(f.interface, 'interface', DISK_INTERFACES);
		let probe;
		try {
			probe = probeMachine({ bytes: sizeMb * 2 ** 20, dir: f.dir, diskInterface, dropCaches: f['drop-caches'] ?? false });
		} catch (err) {
			throw new CliError(`could not measure the disk: ${err instanceof Error ? err.message : String(err)}`);
		}
		const checked = machineProbeSchema.safeParse(probe);
		if (!checked.success) throw new Error(`probe produced an invalid profile: ${checked.error.issues.map((i) => i.message).join('; ')}`);
		if (f.json) {
			console.log(JSON.stringify(probe, null, 2));
			return;
		}
		const m = probe.machine;
		console.log(`RAM ${m.ramGiB} GiB, ${m.cores} cores, relative core speed ${m.coreSpeed} (${probe.measured.nsPerNnz.toFixed(2)} ns per nonzero)`);
		console.log(`disk ${probe.measured.readMBps.toFixed(0)} MB/s sequential read; interface ${m.diskInterface}${probe.measured.interfaceGuessed ? ' (guessed)' : ''}`);
		console.log(`method: ${probe.measured.readMethod}`);
	}
};
