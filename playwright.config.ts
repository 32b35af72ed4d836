import { defineConfig } from '@playwright/test';

const PORT = Number(process.env.E2E_PORT ?? 4173);
const BASE = `http://localhost:${PORT}`;

export default defineConfig({
	testDir: 'e2e',
	fullyParallel: false,
	workers: 1,
	retries: process.env.CI ? 1 : 0,
	timeout: 60_000,
	reporter: [['list']],
	use: {
		baseURL: BASE,
		launchOptions: {
			executablePath: process.env.CHROMIUM_PATH || '/usr/bin/chromium',
			args: [
				'--headless',
				'--no-sandbox',
				'--disable-gpu',
				'--disable-quic',
				'--no-first-run',
				'--disable-background-networking',
				'--disable-component-update',
				'--disable-sync'
			]
		},
		trace: 'off',
		screenshot: 'only-on-failure'
	},
	projects: [
		{ name: 'setup', testMatch: /auth\.setup\.ts/ },
		{ name: 'app', testMatch: /.*\.spec\.ts/, dependencies: ['setup'] }
	],
	webServer: {
		command: 'node scripts/e2e-server.js',
		url: `${BASE}/signin`,
		timeout: 600_000,
		reuseExistingServer: false,
		stdout: 'pipe',
		env: { PORT: String(PORT), ORIGIN: BASE }
	}
});
