import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		// SvelteKit's own origin check for form posts stays on (default); API routes add their own in hooks.server.ts.
		// Tests build into their own folders (LOADLINE_BUILD_DIR, LOADLINE_KIT_DIR) so a running app is never rebuilt under it.
		adapter: adapter({ out: process.env.LOADLINE_BUILD_DIR || 'build' }),
		outDir: process.env.LOADLINE_KIT_DIR || '.svelte-kit',
		csp: {
			mode: 'auto',
			directives: {
				'default-src': ['self'],
				'script-src': ['self'],
				// Svelte transitions and chart libraries set inline styles.
				'style-src': ['self', 'unsafe-inline'],
				'img-src': ['self', 'data:'],
				'font-src': ['self'],
				'connect-src': ['self'],
				'form-action': ['self'],
				'frame-ancestors': ['none'],
				'base-uri': ['self'],
				'object-src': ['none']
			}
		}
	}
};

export default config;
