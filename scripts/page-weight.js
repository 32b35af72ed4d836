// What a phone downloads before it can use each field page of the production build, on the
// demo data: JavaScript and CSS, raw and gzip (level 9, as the precompressed files are). The
// budget (issue 17): at most 60 KB of JavaScript gzip per field page at first paint
// (PAGE_WEIGHT_BUDGET_KB); any page over it makes the script exit 1. First paint is the code
// the page's answer names (its <script src> and stylesheets, and the modulepreload links SvelteKit
// sends in the `Link` header for every module the page statically needs to hydrate); code the page fetches later by itself (the offline layer once it is up, the camera when
// asked for, signature_pad as the sign-off nears) is counted apart, as "later", until the
// network is idle. Pages: a label's public record, the build bench, a site, a system, its
// commissioning checklist, claim filing.
//
//   node scripts/page-weight.js [--json] [path email|-]   (BENCH_PORT; PAGE_WEIGHT_FILES=1 lists files;
//   PAGE_WEIGHT_SHOTS=dir saves a 390 × 844 screenshot of each page there)
import { chromium } from '@playwright/test';
import { gzipSync } from 'node:zlib';
import { createClient } from '@libsql/client';
import { startBenchServer, signInCookie } from './lib/bench-server.js';

const args = process.argv.slice(2);
const asJson = args.includes('--json');
const [onePath, oneEmail] = args.filter((a) => a !== '--json');
const BUDGET_KB = Number(process.env.PAGE_WEIGHT_BUDGET_KB ?? 60);
const dbDir = 'data/page-weight';

const server = await startBenchServer({
	port: Number(process.env.BENCH_PORT ?? 4174),
	dbDir
});
const results = [];
let browser;
try {
	const c = createClient({ url: `file:${dbDir}/bench.db` });
	const one = async (sql) => (await c.execute(sql)).rows[0]?.[0];
	const serial = await one(
		"SELECT serial FROM modules WHERE state <> 'allocated' ORDER BY id LIMIT 1"
	);
	// The demo's unfinished system (its checklist still open) and its site.
	const system = await one(
		'SELECT s.id FROM systems s WHERE NOT EXISTS (SELECT 1 FROM commissionings c WHERE c.system_id = s.id) ORDER BY s.id LIMIT 1'
	);
	const site = await one(`SELECT site_id FROM systems WHERE id = ${Number(system)}`);
	c.close();
	const pages = onePath
		? [{ name: onePath, path: onePath, email: oneEmail && oneEmail !== '-' ? oneEmail : null }]
		: [
				{ name: 'public record (label scan)', path: `/m/${serial}`, email: null },
				{ name: 'build bench', path: '/bench', email: 'workshop@tidewater.example' },
				{ name: 'site', path: `/sites/${site}`, email: 'tech@tidewater.example' },
				{ name: 'system', path: `/systems/${system}`, email: 'tech@tidewater.example' },
				{
					name: 'commissioning checklist',
					path: `/systems/${system}/commission`,
					email: 'tech@tidewater.example'
				},
				{ name: 'claim filing', path: '/claims/new', email: 'dealer@saltmarsh.example' }
			];
	browser = await chromium.launch({
		executablePath: process.env.CHROMIUM_PATH || '/usr/bin/chromium',
		args: ['--headless', '--no-sandbox', '--disable-gpu']
	});
	const cookies = new Map();
	for (const p of pages) {
		const ctx = await browser.newContext({
			viewport: { width: 390, height: 844 },
			isMobile: true,
			serviceWorkers: 'block'
		});
		if (p.email) {
			if (!cookies.has(p.email)) cookies.set(p.email, await signInCookie(server.origin, p.email));
			await ctx.addCookies(
				cookies
					.get(p.email)
					.split('; ')
					.map((kv) => {
						const i = kv.indexOf('=');
						return { name: kv.slice(0, i), value: kv.slice(i + 1), url: server.origin };
					})
			);
		}
		const page = await ctx.newPage();
		const files = new Map();
		const pending = [];
		page.on('response', (res) => {
			const type = res.request().resourceType();
			if (type !== 'script' && type !== 'stylesheet') return;
			pending.push(
				res
					.body()
					.catch(() => null)
					.then((body) => {
						if (body)
							files.set(res.url(), {
								type,
								raw: body.length,
								gz: gzipSync(body, { level: 9 }).length
							});
					})
			);
		});
		const res = await page.goto(server.origin + p.path, { waitUntil: 'networkidle' });
		if (!res || res.status() !== 200) throw new Error(`${p.path} answered ${res?.status()}`);
		await Promise.all(pending);
		if (process.env.PAGE_WEIGHT_SHOTS)
			await page.screenshot({
				path: `${process.env.PAGE_WEIGHT_SHOTS}/${p.name.replace(/[^a-z]+/gi, '-')}.png`
			});
		const firstPaint = firstPaintFiles(
			await res.text(),
			(await res.allHeaders()).link ?? '',
			server.origin,
			files
		);
		const sum = (t, k, only = null) =>
			[...files]
				.filter(([u, f]) => f.type === t && (!only || only.has(u)))
				.reduce((a, [, f]) => a + f[k], 0);
		const kb = (n) => Math.round((n / 1024) * 10) / 10;
		const r = {
			name: p.name,
			path: p.path,
			as: p.email ?? 'anyone',
			files: firstPaint.size,
			jsKB: kb(sum('script', 'raw', firstPaint)),
			jsGzipKB: kb(sum('script', 'gz', firstPaint)),
			cssGzipKB: kb(sum('stylesheet', 'gz', firstPaint)),
			laterJsGzipKB: kb(sum('script', 'gz') - sum('script', 'gz', firstPaint))
		};
		results.push(r);
		if (process.env.PAGE_WEIGHT_FILES)
			for (const [u, f] of [...files].sort((a, b) => b[1].gz - a[1].gz))
				console.log(
					`    ${f.type.padEnd(10)} ${String(f.gz).padStart(6)} ${firstPaint.has(u) ? '     ' : 'later'} ${u.replace(server.origin, '')}`
				);
		console.log(
			`${r.name.padEnd(28)} ${r.path.padEnd(26)} JS ${String(r.jsKB).padStart(6)} KB raw, ${String(r.jsGzipKB).padStart(5)} KB gzip${r.jsGzipKB > BUDGET_KB ? `  OVER the ${BUDGET_KB} KB budget` : ''}; CSS ${r.cssGzipKB} KB gzip; later ${r.laterJsGzipKB} KB JS gzip (${r.as})`
		);
		await ctx.close();
	}
} finally {
	await browser?.close();
	server.stop();
}
/**
 * The scripts and styles a page's answer names: SvelteKit preloads every module the page
 * imports statically (the `Link` header), so what is not named was fetched later by a dynamic
 * import (PAGE_WEIGHT_FILES=1 marks those "later"). Only files the browser fetched are counted.
 */
function firstPaintFiles(html, link, origin, files) {
	const named = new Set();
	for (const part of link.split(',')) {
		const lt = part.indexOf('<');
		const gt = part.indexOf('>', lt);
		if (lt >= 0 && gt > lt && /rel="?(modulepreload|preload)/.test(part.slice(gt, gt + 40)))
			named.add(part.slice(lt + 1, gt));
	}
	const attr = (tag, name) => {
		const i = tag.indexOf(`${name}="`);
		return i < 0 ? null : tag.slice(i + name.length + 2, tag.indexOf('"', i + name.length + 2));
	};
	for (const tag of html.split('<').slice(1)) {
		const end = tag.indexOf('>');
		const t = tag.slice(0, end < 0 ? 200 : Math.min(end, 2000));
		if (t.startsWith('script ') && attr(t, 'src')) named.add(attr(t, 'src'));
		if (t.startsWith('link ') && /rel="(modulepreload|stylesheet)"/.test(t) && attr(t, 'href'))
			named.add(attr(t, 'href'));
	}
	// SvelteKit's inline start script imports its entry points by URL.
	for (const part of html.split('import("').slice(1)) named.add(part.slice(0, part.indexOf('"')));
	const fetched = new Set();
	for (const n of named) {
		const url = new URL(n, origin + '/').href;
		if (files.has(url)) fetched.add(url);
	}
	return fetched;
}

const over = results.filter((r) => r.jsGzipKB > BUDGET_KB);
console.log(
	over.length
		? `${over.length} field page(s) over ${BUDGET_KB} KB of JavaScript gzip.`
		: `Every field page within ${BUDGET_KB} KB of JavaScript gzip.`
);
if (asJson) console.log(JSON.stringify({ budgetKB: BUDGET_KB, pages: results }));
if (over.length) process.exitCode = 1;
