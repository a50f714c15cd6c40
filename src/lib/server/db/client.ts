/** A Drizzle client for a given URL; usable from the app, the CLI and tests alike. */
import { drizzle } from 'drizzle-orm/postgres-js';
import postgres from 'postgres';
import * as schema from './schema.js';

export function createDb(url: string, max = 10) {
	const client = postgres(url, { max, onnotice: () => {} });
	return { db: drizzle(client, { schema }), client };
}

export type Db = ReturnType<typeof createDb>['db'];
