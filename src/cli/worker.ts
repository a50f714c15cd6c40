/**
 * `npm run worker`: consume calibration and upload-parsing jobs from the queue in PostgreSQL.
 * Uses DATABASE_URL, or Loadline's own cluster when unset. Several may run against one database.
 */
import { ensureLocalDatabase } from '../lib/server/db/local.js';
import { runWorker } from '../lib/server/jobs/worker.js';

const stamp = () => new Date().toISOString().slice(11, 19);
const log = (line: string) => console.log(`[worker ${process.pid} ${stamp()}] ${line}`);

// pg-boss completes jobs without awaiting; while PostgreSQL restarts such a rejection must not end the worker
process.on('unhandledRejection', (err) => log(`background error: ${(err as Error)?.message ?? String(err)}`));

try {
	const { url } = await ensureLocalDatabase();
	const worker = await runWorker(url, log);
	log('ready: waiting for calibration and upload jobs');
	const stop = async () => {
		log('stopping');
		await worker.stop().catch(() => {});
		process.exit(0);
	};
	process.on('SIGINT', stop);
	process.on('SIGTERM', stop);
} catch (e) {
	console.error(`worker failed to start: ${(e as Error).message}`);
	process.exit(1);
}
