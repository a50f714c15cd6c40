/** `npm run db -- start|stop|url`: Loadline's own PostgreSQL cluster under .data/postgres. */
import { ensureLocalDatabase, DEFAULT_DATA_DIR } from '../lib/server/db/local.js';
import { stopCluster } from '../lib/server/db/cluster.js';

const cmd = process.argv[2] ?? 'start';
if (cmd === 'start' || cmd === 'url') {
	const { url } = await ensureLocalDatabase();
	console.log(cmd === 'url' ? url : `PostgreSQL ready, migrations applied: ${url}`);
} else if (cmd === 'stop') {
	stopCluster(DEFAULT_DATA_DIR);
	console.log('PostgreSQL stopped');
} else {
	console.error(`usage: npm run db -- start|stop|url (got "${cmd}")`);
	process.exit(2);
}
