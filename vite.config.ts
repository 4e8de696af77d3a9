import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
	plugins: [tailwindcss(), sveltekit()],
	server: { host: '127.0.0.1' },
	test: {
		// Unit tests beside the code, integration tests against the real PostgreSQL in tests/integration.
		include: [
			'src/**/*.test.ts',
			'tests/integration/**/*.test.ts',
			'fakes/**/*.test.ts',
			'workers/**/*.test.ts'
		],
		environment: 'node',
		// Integration tests share one database: run files one after another.
		fileParallelism: false,
		testTimeout: 30_000,
		hookTimeout: 60_000
	}
});
