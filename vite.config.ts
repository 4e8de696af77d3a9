import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
	plugins: [tailwindcss(), sveltekit()],
	server: { host: '127.0.0.1' },
	test: {
		environment: 'node',
		testTimeout: 30_000,
		hookTimeout: 60_000,
		// Two projects: `npm run test:unit` (--project unit) runs anywhere, with no database,
		// Redis or fakes; `npm test` runs both.
		projects: [
			{
				extends: true,
				test: {
					name: 'unit',
					// Beside the code; a test that needs PostgreSQL, Redis or a running fake belongs
					// in tests/integration instead.
					include: ['src/**/*.test.ts', 'fakes/**/*.test.ts', 'workers/**/*.test.ts'],
					sequence: { groupOrder: 0 }
				}
			},
			{
				extends: true,
				test: {
					name: 'integration',
					include: ['tests/integration/**/*.test.ts'],
					// They share one database: run files one after another, after the unit tests.
					fileParallelism: false,
					sequence: { groupOrder: 1 }
				}
			}
		]
	}
});
