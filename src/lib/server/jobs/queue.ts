/** pg-boss in its own schema of the app's database: one instance per process, both queues created before use. */
import PgBoss from 'pg-boss';
import { QUEUE_CALIBRATE, QUEUE_PARSE_UPLOAD, QUEUE_SCHEMA, MAX_ATTEMPTS, queueSettings } from './config.js';

export interface BossOptions {
	/** a worker: runs pg-boss's maintenance (expiring lost jobs) and sets the queues' retry policy */
	worker?: boolean;
	onError?: (err: Error) => void;
}

export async function startBoss(url: string, opts: BossOptions = {}): Promise<PgBoss> {
	const s = queueSettings();
	const boss = new PgBoss({
		connectionString: url,
		schema: QUEUE_SCHEMA,
		max: 4,
		supervise: opts.worker ?? false,
		schedule: false,
		maintenanceIntervalSeconds: s.maintenanceSeconds,
		application_name: 'loadline-queue'
	});
	// without a listener an 'error' event (e.g. PostgreSQL restarting) would end the process
	boss.on('error', opts.onError ?? ((err) => console.error(`queue: ${err.message}`)));
	await boss.start();
	const common = { retryLimit: MAX_ATTEMPTS - 1, retryDelay: s.retryDelaySeconds, expireInSeconds: s.expireSeconds };
	const queues = [
		{ name: QUEUE_CALIBRATE, ...common },
		{ name: QUEUE_PARSE_UPLOAD, ...common, expireInSeconds: Math.max(s.expireSeconds, 600) }
	];
	for (const policy of queues) {
		await boss.createQueue(policy.name, policy);
		// the workers' settings win: jobs sent by the web app take the queue's policy
		if (opts.worker) await boss.updateQueue(policy.name, policy);
	}
	return boss;
}
