/** Apply the committed Drizzle migrations in drizzle/ to a database. */
import { migrate } from 'drizzle-orm/postgres-js/migrator';
import { fileURLToPath } from 'node:url';
import { createDb } from './client.js';

export const migrationsFolder = fileURLToPath(new URL('../../../../drizzle', import.meta.url));

export async function applyMigrations(url: string): Promise<void> {
	const { db, client } = createDb(url, 1);
	try {
		await migrate(db, { migrationsFolder });
	} finally {
		await client.end();
	}
}
