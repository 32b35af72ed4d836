// Measures what a phone downloads for a page of the production build on the demo data:
// JavaScript and CSS, raw and gzip (level 9). Usage:
//   node scripts/page-weight.js [path] [email]   (default: the demo's unfinished system's checklist as tech@tidewater.example)
import { chromium } from '@playwright/test';
import { gzipSync } from 'node:zlib';
import { startBenchServer, signInCookie } from './lib/bench-server.js';

const server = await startBenchServer({
	port: Number(process.env.BENCH_PORT ?? 4174),
	dbDir: 'data/page-weight'
});
try {
	const email = process.argv[3] ?? 'tech@tidewater.example';
	const cookie = await signInCookie(server.origin, email);
	const path = process.argv[2] ?? '/systems/3/commission';
	const browser = await chromium.launch({
		executablePath: process.env.CHROMIUM_PATH || '/usr/bin/chromium',
		args: ['--headless', '--no-sandbox', '--disable-gpu']
	});
	const ctx = await browser.newContext({ viewport: { width: 390, height: 844 }, isMobile: true });
	await ctx.addCookies(
		cookie.split('; ').map((c) => {
			const i = c.indexOf('=');
			return { name: c.slice(0, i), value: c.slice(i + 1), url: server.origin };
		})
	);
	const page = await ctx.newPage();
	const files = new Map();
	page.on('response', async (res) => {
		const type = res.request().resourceType();
		if (type !== 'script' && type !== 'stylesheet') return;
		const body = await res.body().catch(() => null);
		if (body)
			files.set(res.url(), { type, raw: body.length, gz: gzipSync(body, { level: 9 }).length });
	});
	await page.goto(server.origin + path, { waitUntil: 'networkidle' });
	const sum = (t, k) =>
		[...files.values()].filter((f) => f.type === t).reduce((a, f) => a + f[k], 0);
	const kb = (n) => `${(n / 1024).toFixed(1)} KB`;
	if (process.env.PAGE_WEIGHT_FILES)
		for (const [u, f] of files) console.log(f.type, f.gz, u.replace(server.origin, ''));
	console.log(`${path} as ${email} (390×844): ${files.size} files`);
	console.log(`  JavaScript ${kb(sum('script', 'raw'))} raw, ${kb(sum('script', 'gz'))} gzip`);
	console.log(
		`  CSS        ${kb(sum('stylesheet', 'raw'))} raw, ${kb(sum('stylesheet', 'gz'))} gzip`
	);
	await browser.close();
} finally {
	server.stop();
}
