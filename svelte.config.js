import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		// SvelteKit's Origin check on form POSTs is left on (the default): it is our CSRF defence.
		adapter: adapter(),
		// Migrations live at the top level (shared with the CLI scripts) but are bundled into the server.
		alias: { $migrations: 'migrations' },
		// Content-Security-Policy on every page (issue 13). SvelteKit adds a hash or nonce for its
		// own inline start-up script ('auto'); nothing else may run. Styles allow inline because
		// Svelte sets style attributes (charts, transitions). form-action is left out: paying
		// redirects a form post to Stripe's checkout, another origin.
		csp: {
			mode: 'auto',
			directives: {
				'default-src': ['self'],
				'script-src': ['self'],
				'style-src': ['self', 'unsafe-inline'],
				'img-src': ['self', 'data:', 'blob:'],
				'font-src': ['self', 'data:'],
				'connect-src': ['self'],
				'object-src': ['none'],
				'base-uri': ['self'],
				'frame-ancestors': ['none']
			}
		}
	}
};

export default config;
