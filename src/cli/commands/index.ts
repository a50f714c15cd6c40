/** Registry of `loadline` commands; each lives in its own file beside this one. */
import type { Command } from '../args.js';

export const commands: Record<string, Command> = {};
