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
				// Integration and end-to-end tests share one throwaway database, inbox and app server.
				extends: true,
				test: {
					name: 'app',
					environment: 'node',
					include: ['tests/integration/**/*.test.ts', 'tests/e2e/**/*.test.ts'],
					globalSetup: ['tests/setup/app.ts'],
					testTimeout: 60_000,
					hookTimeout: 300_000,
					fileParallelism: false
				}
			}
		]
	}
});
