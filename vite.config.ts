import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
	plugins: [tailwindcss(), sveltekit()],
	server: { host: '127.0.0.1' },
	preview: { host: '127.0.0.1' },
	test: {
		expect: { requireAssertions: true },
		projects: [
			{
				extends: true,
				test: { name: 'unit', environment: 'node', include: ['tests/unit/**/*.test.ts'], testTimeout: 120_000 }
			},
			{
				extends: true,
				test: {
					name: 'integration',
					environment: 'node',
					include: ['tests/integration/**/*.test.ts'],
					globalSetup: ['tests/setup/database.ts'],
					testTimeout: 60_000,
					hookTimeout: 120_000,
					fileParallelism: false
				}
			},
			{
				extends: true,
				test: {
					name: 'e2e',
					environment: 'node',
					include: ['tests/e2e/**/*.test.ts'],
					globalSetup: ['tests/setup/app.ts'],
					testTimeout: 120_000,
					hookTimeout: 300_000,
					fileParallelism: false
				}
			}
		]
	}
});
