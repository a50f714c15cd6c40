/**
 * `npm start`: PostgreSQL, the fake inbox, migrations, demo data, a fresh build when needed,
 * and the web server on 127.0.0.1. Ctrl-C stops everything it started.
 */
import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { ChildProcess } from 'node:child_process';
import { ensureLocalDatabase } from '../lib/server/db/local.js';
import { stopCluster } from '../lib/server/db/cluster.js';
import { createDb } from '../lib/server/db/client.js';
import { seedDemo, seedDemoPlans, DEMO_EMAIL } from '../lib/server/seed.js';
import { startFakeStripe, type FakeStripe } from './fake-stripe.js';
import { buildIfStale, root, serveApp, startMaildev, startWorker } from './services.js';

const port = Number(process.env.PORT ?? 5173);
const smtpPort = Number(process.env.MAIL_SMTP_PORT ?? 1025);
const inboxPort = Number(process.env.MAIL_WEB_PORT ?? 1080);
const children: ChildProcess[] = [];
let ownCluster: string | null = null;

function authSecret(): string {
	if (process.env.AUTH_SECRET) return process.env.AUTH_SECRET;
	const file = join(root, '.data/auth-secret');
	if (!existsSync(file)) {
		mkdirSync(join(root, '.data'), { recursive: true });
		writeFileSync(file, randomBytes(32).toString('base64url'), { mode: 0o600 });
	}
	return readFileSync(file, 'utf8').trim();
}

function shutdown(code = 0) {
	for (const c of children) c.kill('SIGTERM');
	if (ownCluster) {
		try {
			stopCluster(ownCluster);
		} catch (e) {
			console.error(`could not stop PostgreSQL: ${(e as Error).message}`);
		}
	}
	process.exit(code);
}
process.on('SIGINT', () => shutdown(0));
process.on('SIGTERM', () => shutdown(0));

try {
	const database = await ensureLocalDatabase({ dataDir: join(root, '.data/postgres') });
	ownCluster = database.dataDir;
	const { db, client } = createDb(database.url, 1);
	const seeded = await seedDemo(db);

	const external = Boolean(process.env.SMTP_URL);
	if (!external) children.push(await startMaildev(smtpPort, inboxPort));
	// With a real STRIPE_SECRET_KEY (and no STRIPE_API_BASE) the app talks to Stripe itself; otherwise to the fake here.
	const realStripe = Boolean(process.env.STRIPE_SECRET_KEY && !process.env.STRIPE_API_BASE);
	const fakeStripe: FakeStripe | null = realStripe ? null : await startFakeStripe(Number(process.env.STRIPE_FAKE_PORT ?? 12111));
	buildIfStale();
	const app = await serveApp(port, {
		DATABASE_URL: database.url,
		AUTH_SECRET: authSecret(),
		SMTP_URL: process.env.SMTP_URL ?? `smtp://127.0.0.1:${smtpPort}`,
		...(fakeStripe && { STRIPE_API_BASE: fakeStripe.url })
	});
	children.push(app);
	const demoPlans = await seedDemoPlans(db, `http://127.0.0.1:${port}`);
	await client.end();
	app.on('exit', (code) => {
		console.error(`web server exited (${code}); stopping.`);
		shutdown(1);
	});
	// the calibration and upload worker, on the same database (more may run: `npm run worker`)
	const worker = startWorker({ DATABASE_URL: database.url, ORIGIN: `http://127.0.0.1:${port}`, SMTP_URL: process.env.SMTP_URL ?? `smtp://127.0.0.1:${smtpPort}` });
	children.push(worker);
	worker.on('exit', (code) => {
		if (code !== null && code !== 0) console.error(`worker exited (${code}); calibrations and uploads wait until one runs (npm run worker).`);
	});

	console.log(`
Loadline is running.
  App:         http://127.0.0.1:${port}
  Database:    ${database.url}${database.dataDir ? ` (cluster in ${database.dataDir})` : ''}
  Worker:      calibrations and sample uploads (pid ${worker.pid})
  Fake inbox:  ${external ? `real SMTP at ${process.env.SMTP_URL}` : `http://127.0.0.1:${inboxPort}  (SMTP on 127.0.0.1:${smtpPort})`}
  Fake Stripe: ${fakeStripe ? `${fakeStripe.url}  (in memory; webhooks to /api/billing/webhook, dev signing secret unless STRIPE_WEBHOOK_SECRET)` : 'real Stripe (STRIPE_SECRET_KEY)'}
  Demo data:   ${seeded.created || demoPlans > 0 ? `created (${demoPlans} demo plans)` : 'already present'}

Sign in as the demo user: open http://127.0.0.1:${port}/signin, enter ${DEMO_EMAIL},
then open the fake inbox and click the link in the newest message.
Press Ctrl-C to stop everything.`);
} catch (e) {
	console.error(`npm start failed: ${(e as Error).message}`);
	shutdown(1);
}
