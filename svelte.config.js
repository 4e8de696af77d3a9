import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		// SvelteKit's Origin check on form POSTs is left on (the default): it is our CSRF defence.
		adapter: adapter(),
		// Migrations live at the top level (shared with the CLI scripts) but are bundled into the server.
		alias: { $migrations: 'migrations' }
	}
};

export default config;
