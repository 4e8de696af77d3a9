import { defineConfig } from '@playwright/test';

const port = Number(process.env.PORT ?? 4173);
const baseURL = `http://127.0.0.1:${port}`;

/** End-to-end tests against the production build (`node build`) in Debian's Chromium. */
export default defineConfig({
	testDir: 'tests/e2e',
	outputDir: '.data/test/playwright-results',
	workers: 1,
	timeout: 60_000,
	retries: 0,
	reporter: [['list'], ['json', { outputFile: '.data/test/playwright.json' }]],
	use: {
		baseURL,
		extraHTTPHeaders: { Origin: baseURL },
		screenshot: 'only-on-failure',
		launchOptions: {
			executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
			args: [
				'--no-sandbox',
				'--disable-gpu',
				'--disable-background-networking',
				'--disable-component-update',
				'--disable-sync',
				'--no-first-run',
				'--disable-quic'
			]
		}
	},
	webServer: [
		{
			command: 'node build',
			url: `${baseURL}/healthz`,
			reuseExistingServer: !process.env.CI,
			timeout: 60_000,
			env: {
				...(process.env as Record<string, string>),
				PORT: String(port),
				HOST: '127.0.0.1',
				ORIGIN: baseURL,
				// Setup photos go up to 8 MB, programs up to 20 MB; adapter-node refuses bodies over
				// 512 kB by default.
				BODY_SIZE_LIMIT: process.env.BODY_SIZE_LIMIT ?? '24M',
				// A deleted shop's grace period, short so shop-life.spec.ts sees the drop (issue 18).
				SHOP_DELETION_GRACE_SECONDS: '20'
			}
		},
		// The background worker (shop-checks queue: "Check now" on the fleet board), same env.
		{
			command: 'node_modules/.bin/tsx workers/index.ts',
			wait: { stdout: /shop-checks ready/ },
			timeout: 60_000,
			env: { ...(process.env as Record<string, string>), SHOP_CHECKS_BACKOFF_MS: '1000' }
		}
	]
});
