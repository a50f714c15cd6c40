/** Small helpers shared by CLI commands: parse flags with node:util, fail with a message naming the flag. */
import { parseArgs, type ParseArgsConfig } from 'node:util';

export class CliError extends Error {}

export interface Command {
	summary: string;
	help: string;
	run(argv: string[]): Promise<number | void>;
}

export function parseFlags<T extends NonNullable<ParseArgsConfig['options']>>(argv: string[], options: T, allowPositionals = false) {
	try {
		return parseArgs({ args: argv, options, allowPositionals, strict: true });
	} catch (err) {
		throw new CliError(err instanceof Error ? err.message : String(err));
	}
}

/** A required or defaulted number flag; the message names the flag. */
export function numberFlag(value: string | undefined, flag: string, opts: { default?: number; min?: number; max?: number; integer?: boolean } = {}): number {
	if (value === undefined) {
		if (opts.default !== undefined) return opts.default;
		throw new CliError(`--${flag} is required`);
	}
	const x = Number(value);
	if (!Number.isFinite(x)) throw new CliError(`--${flag} must be a number, got "${value}"`);
	if (opts.integer && !Number.isInteger(x)) throw new CliError(`--${flag} must be a whole number, got "${value}"`);
	if (opts.min !== undefined && x < opts.min) throw new CliError(`--${flag} must be at least ${opts.min}, got ${value}`);
	if (opts.max !== undefined && x > opts.max) throw new CliError(`--${flag} must be at most ${opts.max}, got ${value}`);
	return x;
}

/** A required or defaulted flag restricted to a list of choices. */
export function choiceFlag<C extends string>(value: string | undefined, flag: string, choices: readonly C[], fallback?: C): C {
	if (value === undefined) {
		if (fallback !== undefined) return fallback;
		throw new CliError(`--${flag} is required (one of ${choices.join(', ')})`);
	}
	if (!(choices as readonly string[]).includes(value)) throw new CliError(`--${flag} must be one of ${choices.join(', ')}, got "${value}"`);
	return value as C;
}
