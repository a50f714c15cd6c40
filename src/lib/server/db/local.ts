/** The database `npm start`, the worker and the tests use: DATABASE_URL when set, else Loadline's own cluster. */
import { ensureDatabase, findPgBin, startCluster } from './cluster.js';
import { applyMigrations } from './migrate.js';

export const DEFAULT_PG_PORT = 54329;
export const DEFAULT_DATA_DIR = '.data/postgres';

export interface LocalDatabase {
	url: string;
	/** folder of the cluster we run, or null when DATABASE_URL points elsewhere */
	dataDir: string | null;
}

export async function ensureLocalDatabase(opts: { dataDir?: string; port?: number; name?: string; url?: string } = {}): Promise<LocalDatabase> {
	const external = opts.url ?? process.env.DATABASE_URL;
	if (external) {
		await applyMigrations(external);
		return { url: external, dataDir: null };
	}
	const dataDir = opts.dataDir ?? DEFAULT_DATA_DIR;
	const cluster = startCluster(dataDir, opts.port ?? DEFAULT_PG_PORT, findPgBin());
	const url = await ensureDatabase(cluster, opts.name ?? 'loadline');
	await applyMigrations(url);
	return { url, dataDir };
}
