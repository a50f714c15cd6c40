/**
 * Settings of the calibration queue, read from the environment in one place (the web app and
 * the worker share them). Every setting with its default:
 *   LOADLINE_CALIBRATION_SECONDS     time budget of one calibration                 default 75 (the engine's)
 *   LOADLINE_CALIBRATION_MAX_ROWS    largest rows of one calibration run             default 200 000 (the engine's)
 *   LOADLINE_JOB_STALE_SECONDS       a running job whose heartbeat is this old is handed to another worker  default 30
 *   LOADLINE_JOB_EXPIRE_SECONDS      backstop: pg-boss retries any job active this long  default 3 × budget + 60
 *   LOADLINE_JOB_RETRY_DELAY_SECONDS wait before a failed or lost job runs again     default 5
 *   LOADLINE_MAINTENANCE_SECONDS     how often a worker looks for lost jobs          default 5
 *   LOADLINE_POLL_SECONDS            how often an idle worker asks for work          default 1
 */
export const QUEUE_CALIBRATE = 'calibrate';
export const QUEUE_PARSE_UPLOAD = 'parse-upload';
/** pg-boss keeps its tables in this schema of the app's database */
export const QUEUE_SCHEMA = 'pgboss';
/** runs of one job before it is marked failed (the first plus retries) */
export const MAX_ATTEMPTS = 3;

function num(name: string, fallback: number, min: number): number {
	const raw = process.env[name];
	if (raw === undefined || raw === '') return fallback;
	const x = Number(raw);
	if (!Number.isFinite(x) || x < min) throw new Error(`${name} must be a number of at least ${min}, got "${raw}"`);
	return x;
}

export interface QueueSettings {
	budgetSeconds: number;
	maxRows: number | undefined;
	staleSeconds: number;
	expireSeconds: number;
	retryDelaySeconds: number;
	maintenanceSeconds: number;
	pollSeconds: number;
}

export function queueSettings(): QueueSettings {
	const budgetSeconds = num('LOADLINE_CALIBRATION_SECONDS', 75, 0.5);
	const maxRows = process.env.LOADLINE_CALIBRATION_MAX_ROWS ? num('LOADLINE_CALIBRATION_MAX_ROWS', 200_000, 1000) : undefined;
	return {
		budgetSeconds,
		maxRows,
		staleSeconds: num('LOADLINE_JOB_STALE_SECONDS', 30, 3),
		expireSeconds: Math.round(num('LOADLINE_JOB_EXPIRE_SECONDS', 3 * budgetSeconds + 60, 2)),
		retryDelaySeconds: Math.round(num('LOADLINE_JOB_RETRY_DELAY_SECONDS', 5, 0)),
		maintenanceSeconds: Math.round(num('LOADLINE_MAINTENANCE_SECONDS', 5, 1)),
		pollSeconds: num('LOADLINE_POLL_SECONDS', 1, 0.5)
	};
}
