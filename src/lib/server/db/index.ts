/** The app's database client. Fails fast without DATABASE_URL (except while SvelteKit builds). */
import { building } from '$app/environment';
import { env } from '$env/dynamic/private';
import { createDb } from './client.js';

if (!env.DATABASE_URL && !building) throw new Error('DATABASE_URL is not set');

export const { db, client } = createDb(env.DATABASE_URL ?? 'postgres://unset@127.0.0.1:1/unset');
