/** `loadline estimate`: predict every strategy for a plan from a calibration record. */
import { CliError, parseFlags, type Command } from '../args.js';
import { predict, formatSeconds } from '../../lib/engine/model/predict.js';
import { formatBytes } from '../../lib/engine/model/sizes.js';
import { readCalibration, readPlan } from './plan-files.js';

const help = `loadline estimate --plan PLAN.json --calibration CAL.json [--json]

Predict, for every strategy, whether the plan fits the machine, passes over the data, epochs,
cache hit rate, wall time (p10/p50/p90) with its breakdown, peak memory and cost, and name the
fastest feasible strategy.

  --plan FILE           plan (the plan schema)
  --calibration FILE    record written by \`loadline calibrate\`
  --json                print one JSON object`;

export const estimate: Command = {
	summary: 'estimate time, passes, memory and cost of every strategy for a plan',
	help,
	async run(argv) {
		const { values: f } = parseFlags(argv, { plan: { type: 'string' }, calibration: { type: 'string' }, json: { type: 'boolean' } });
		if (!f.plan) throw new CliError('--plan is required');
		if (!f.calibration) throw new CliError('--calibration is required');
		const plan = readPlan(f.plan);
		const record = readCalibration(f.calibration);
		const e = predict(plan, record);
		if (f.json) {
			console.log(JSON.stringify(e, null, 2));
			return;
		}
		const rows = e.strategies.map((s) => [
			s.strategy,
			s.feasible ? 'yes' : 'no',
			`${s.passes.p50.toFixed(1)} (p90 ${s.passes.p90.toFixed(1)})`,
			s.epochs.toFixed(1),
			s.cacheHitRate.toFixed(3),
			`${formatSeconds(s.wallSeconds.p10)} / ${formatSeconds(s.wallSeconds.p50)} / ${formatSeconds(s.wallSeconds.p90)}`,
			formatBytes(s.peakMemoryBytes),
			s.cost ? s.cost.p50.toFixed(2) : '–'
		]);
		const head = ['strategy', 'fits', 'passes', 'epochs', 'hit rate', 'wall p10 / p50 / p90', 'peak memory', 'cost p50'];
		const widths = head.map((h, i) => Math.max(h.length, ...rows.map((r) => r[i].length)));
		const line = (r: string[]) => r.map((c, i) => c.padEnd(widths[i])).join('  ');
		console.log(line(head));
		for (const r of rows) console.log(line(r));
		for (const s of e.strategies) if (!s.feasible) console.log(`${s.strategy}: ${s.reason}`);
		const sweep = e.strategies[0]?.sweep;
		if (sweep && sweep.runs > 1) console.log(`sweep: ${sweep.runs} runs of ${sweep.rowsPerRun} rows each`);
		for (const s of e.strategies) if (s.deadline) console.log(`${s.strategy}: ${s.deadline.verdict} the ${s.deadline.hours} h deadline (sweep p50 ${formatSeconds(s.sweep.wallSeconds.p50)}, p90 ${formatSeconds(s.sweep.wallSeconds.p90)})`);
		console.log(e.why);
		console.log(e.extrapolation.text);
		for (const n of e.notes) console.log(`note: ${n}`);
	}
};
