/** Registry of `loadline` commands; each lives in its own file beside this one. */
import type { Command } from '../args.js';
import { gen } from './gen.js';
import { convert } from './convert.js';
import { profile } from './profile.js';
import { train } from './train.js';
import { calibrate } from './calibrate.js';
import { estimate } from './estimate.js';
import { probeMachineCommand } from './probe-machine.js';

export const commands: Record<string, Command> = {
	gen,
	convert,
	profile,
	train,
	calibrate,
	estimate,
	'probe-machine': probeMachineCommand
};
