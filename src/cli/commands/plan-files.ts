/** Reading PLAN.json and CAL.json for CLI commands; bad input becomes a CliError naming the field. */
import { readFileSync } from 'node:fs';
import { CliError } from '../args.js';
import { parsePlan, fieldErrors, type Plan } from '../../lib/schemas/plan.js';
import { calibrationRecordSchema, type CalibrationRecord } from '../../lib/engine/calibrate/record.js';

function readJson(path: string, flag: string): unknown {
	let text: string;
	try {
		text = readFileSync(path, 'utf8');
	} catch (err) {
		throw new CliError(`--${flag}: cannot read ${path} (${(err as NodeJS.ErrnoException).code ?? String(err)})`);
	}
	try {
		return JSON.parse(text);
	} catch (err) {
		throw new CliError(`--${flag}: ${path} is not valid JSON (${err instanceof Error ? err.message : String(err)})`);
	}
}

export function readPlan(path: string): Plan {
	const r = parsePlan(readJson(path, 'plan'));
	if (!r.ok) throw new CliError(`${path} is not a valid plan:\n${r.errors.map((e) => `  ${e.message}`).join('\n')}`);
	return r.plan;
}

export function readCalibration(path: string): CalibrationRecord {
	const r = calibrationRecordSchema.safeParse(readJson(path, 'calibration'));
	if (!r.success) {
		const errs = fieldErrors(r.error.issues).map((e) => `  ${e.path || 'record'}: ${e.message}`);
		const shown = errs.length > 8 ? [...errs.slice(0, 8), `  … and ${errs.length - 8} more`] : errs;
		throw new CliError(`${path} is not a calibration record:\n${shown.join('\n')}`);
	}
	return r.data;
}
