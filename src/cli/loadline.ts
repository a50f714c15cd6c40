#!/usr/bin/env node
/** The `loadline` command: one front door to the same engine and model the web app uses. */
import { commands } from './commands/index.js';
import { CliError } from './args.js';

const usage = `loadline <command> [options]

Commands:
${Object.entries(commands)
	.map(([name, c]) => `  ${name.padEnd(15)} ${c.summary}`)
	.join('\n')}

Run \`loadline <command> --help\` for the options of one command.`;

async function main(argv: string[]): Promise<number> {
	const [name, ...rest] = argv;
	if (!name || name === '--help' || name === '-h' || name === 'help') {
		console.log(usage);
		return name ? 0 : 1;
	}
	const command = commands[name];
	if (!command) {
		console.error(`loadline: unknown command "${name}"\n\n${usage}`);
		return 2;
	}
	if (rest.includes('--help') || rest.includes('-h')) {
		console.log(command.help);
		return 0;
	}
	try {
		return (await command.run(rest)) ?? 0;
	} catch (err) {
		if (err instanceof CliError) {
			console.error(`loadline ${name}: ${err.message}`);
			return 2;
		}
		console.error(`loadline ${name}: ${err instanceof Error ? err.message : String(err)}`);
		return 1;
	}
}

main(process.argv.slice(2)).then((code) => process.exit(code));
