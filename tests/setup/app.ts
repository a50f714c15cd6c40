/**
 * Global setup for integration and end-to-end tests: a throwaway PostgreSQL cluster
 * (temporary folder, free port), the fake inbox, a fresh build, and the web server.
 * Everything is stopped and removed afterwards.
 */
import { randomBytes } from 'node:crypto';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { TestProject } from 'vitest/node';
import { ensureDatabase, freePort, startCluster, stopCluster } from '../../src/lib/server/db/cluster.js';
import { applyMigrations } from '../../src/lib/server/db/migrate.js';
import { buildIfStale, root, serveApp, startMaildev, testBuild } from '../../src/cli/services.js';
import { startFakeStripe } from '../../src/cli/fake-stripe.js';

declare module 'vitest' {
	export interface ProvidedContext {
		baseUrl: string;
		inboxUrl: string;
		databaseUrl: string;
		/** the local fake Stripe API the app talks to */
		stripeUrl: string;
		/** the secret the app verifies webhook signatures with */
		stripeWebhookSecret: string;
		/** the fake inbox's SMTP address, for tests that send mail from server modules directly */
		smtpUrl: string;
		/** the throwaway cluster's folder, for tests that stop and start PostgreSQL */
		pgDataDir: string;
		/** where the app stores sample uploads (UPLOAD_DIR); workers started by tests need it too */
		uploadDir: string;
	}
}

export default async function setup(project: TestProject) {
	const dir = mkdtempSync(join(tmpdir(), 'loadline-test-'));
	const dataDir = join(dir, 'postgres');
	const cluster = startCluster(dataDir, await freePort());
	const databaseUrl = await ensureDatabase(cluster, 'loadline_test');
	await applyMigrations(databaseUrl);

	const smtpPort = await freePort();
	const inboxPort = await freePort();
	const maildev = await startMaildev(smtpPort, inboxPort, join(dir, 'mail'));

	const stripe = await startFakeStripe();
	const stripeWebhookSecret = `whsec_test_${randomBytes(16).toString('hex')}`;

	const build = testBuild(String(process.pid));
	buildIfStale(build);
	const appPort = await freePort();
	const uploadDir = join(dir, 'uploads');
	const app = await serveApp(appPort, {
		UPLOAD_DIR: uploadDir,
		// small, so the upload-limit cases stay fast
		UPLOAD_LIMIT_BYTES: String(4 * 2 ** 20),
		DATABASE_URL: databaseUrl,
		AUTH_SECRET: randomBytes(32).toString('base64url'),
		SMTP_URL: `smtp://127.0.0.1:${smtpPort}`,
		STRIPE_API_BASE: stripe.url,
		STRIPE_WEBHOOK_SECRET: stripeWebhookSecret,
		// tests give each sign-in request its own client address, so the per-client rate limit stays testable
		CLIENT_IP_HEADER: 'x-forwarded-for'
	}, build);

	project.provide('baseUrl', `http://127.0.0.1:${appPort}`);
	project.provide('inboxUrl', `http://127.0.0.1:${inboxPort}`);
	project.provide('databaseUrl', databaseUrl);
	project.provide('stripeUrl', stripe.url);
	project.provide('stripeWebhookSecret', stripeWebhookSecret);
	project.provide('smtpUrl', `smtp://127.0.0.1:${smtpPort}`);
	project.provide('pgDataDir', dataDir);
	project.provide('uploadDir', uploadDir);
	// workers that tests start (services.startWorker passes process.env on) must read samples where the app wrote them
	process.env.UPLOAD_DIR = uploadDir;

	return async () => {
		app.kill('SIGTERM');
		maildev.kill('SIGTERM');
		await stripe.close();
		try {
			stopCluster(dataDir);
		} finally {
			rmSync(dir, { recursive: true, force: true });
			rmSync(join(root, build.out, '..'), { recursive: true, force: true });
		}
	};
}
