/**
 * Before the test run: make sure the Debian packages the tests rely on are present,
 * installing them with apt-get when missing (CI machines start without them).
 */
import { existsSync } from 'node:fs';
import { execFileSync } from 'node:child_process';

const needs: { pkg: string; file: string }[] = [
	{ pkg: 'postgresql', file: '/usr/lib/postgresql' },
	{ pkg: 'chromium', file: '/usr/bin/chromium' },
	{ pkg: 'liblinear-tools', file: '/usr/bin/liblinear-train' },
	{ pkg: 'python3-sklearn', file: '/usr/lib/python3/dist-packages/sklearn/datasets/data/breast_cancer.csv' }
];

const missing = needs.filter((n) => !existsSync(n.file)).map((n) => n.pkg);
if (missing.length > 0) {
	console.log(`prepare: installing ${missing.join(', ')} with apt-get`);
	const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
	execFileSync('apt-get', ['update'], { stdio: 'inherit', env });
	execFileSync('apt-get', ['install', '-y', '--no-install-recommends', ...missing], { stdio: 'inherit', env });
}
