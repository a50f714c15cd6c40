import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		// SvelteKit's own origin check for form posts stays on (default); API routes add their own.
		adapter: adapter()
	}
};

export default config;
