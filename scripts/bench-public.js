// The public record page (what a label's QR code opens) against a bare node:http server
// sending the same HTML, in the same run, with the same clients on 127.0.0.1.
// Target (issue 17): the page ≥ 0.25 × the bare server's requests per second.
// Measured in one run, in turn: the app sending the page as it is (Accept-Encoding: identity),
// the bare server (the same bytes), the app compressing it (gzip, as browsers ask), and a
// rescan that brings the page's ETag (304 without rendering).
//
//   npm run bench:public [-- --clients 8] [-- --seconds 5] [-- --json]   (BENCH_PORT, BENCH_PORT+1)
import { spawn } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { loadavg } from 'node:os';
import { createClient } from '@libsql/client';
import { get } from 'node:http';
import { startBenchServer, assertPortFree } from './lib/bench-server.js';

const args = process.argv.slice(2);
const opt = (name, fallback) => {
	const i = args.indexOf(name);
	return i >= 0 && args[i + 1] ? Number(args[i + 1]) : fallback;
};
const CLIENTS = Math.min(opt('--clients', 8), 64);
const SECONDS = Math.min(opt('--seconds', 5), 60);
const asJson = args.includes('--json');
const PORT = Number(process.env.BENCH_PORT ?? 4175);
const dbDir = 'data/bench-public';

/** Waits (up to 60 s) until a server answers 200 at `url`. */
async function waitFor(url) {
	for (const end = Date.now() + 60_000; Date.now() < end;) {
		if (
			await fetch(url).then(
				(r) => r.ok,
				() => false
			)
		)
			return;
		await new Promise((r) => setTimeout(r, 100));
	}
	throw new Error(`${url} did not answer within 60 s`);
}

/** Requests per second over SECONDS with CLIENTS concurrent loops, and errors. */
async function rate(url, headers = {}, expect = 200) {
	const end = performance.now() + SECONDS * 1000;
	let done = 0;
	let errors = 0;
	const worker = async () => {
		while (performance.now() < end) {
			try {
				const r = await fetch(url, { headers });
				await r.arrayBuffer();
				if (r.status === expect) done++;
				else errors++;
			} catch {
				errors++;
			}
		}
	};
	const t0 = performance.now();
	await Promise.all(Array.from({ length: CLIENTS }, worker));
	return { perSecond: done / ((performance.now() - t0) / 1000), errors };
}

const server = await startBenchServer({ port: PORT, dbDir });
let bare;
const load = () => loadavg()[0].toFixed(2);
try {
	const c = createClient({ url: `file:${dbDir}/bench.db` });
	const serial = String(
		(await c.execute("SELECT serial FROM modules WHERE state <> 'allocated' ORDER BY id LIMIT 1"))
			.rows[0].serial
	);
	c.close();
	const url = `${server.origin}/m/${serial}`;
	const identity = { 'accept-encoding': 'identity' };
	const first = await fetch(url, { headers: identity });
	const html = await first.text();
	const etag = first.headers.get('etag');
	if (first.status !== 200 || !etag)
		throw new Error(`public page answered ${first.status}, etag ${etag}`);
	// The bare server: a child process of its own (like the app), the same bytes and type.
	writeFileSync(`${dbDir}/page.html`, html);
	const barePort = PORT + 1;
	await assertPortFree(barePort);
	bare = spawn(
		'node',
		[
			'-e',
			`const h=require('node:fs').readFileSync(${JSON.stringify(`${dbDir}/page.html`)});require('node:http').createServer((q,s)=>{s.writeHead(200,{'content-type':'text/html','content-length':h.length});s.end(h)}).listen(${barePort},'127.0.0.1')`
		],
		{ stdio: 'inherit' }
	);
	const bareUrl = `http://127.0.0.1:${barePort}/`;
	await waitFor(bareUrl);
	// The compressed page's size, as a browser receives it.
	const zipped = await new Promise((resolve, reject) =>
		get(url, { headers: { 'accept-encoding': 'gzip' } }, (res) => {
			let n = 0;
			res.on('data', (c) => (n += c.length));
			res.on('end', () => resolve({ bytes: n, encoding: res.headers['content-encoding'] }));
		}).on('error', reject)
	);
	// Warm both, then measure in turn: app, bare, app with gzip, app's revalidation.
	await rate(url, identity);
	await rate(bareUrl, identity);
	const loadBefore = load();
	const app = await rate(url, identity);
	const plain = await rate(bareUrl, identity);
	const gzipped = await rate(url, { 'accept-encoding': 'gzip' });
	const revalidated = await rate(url, { 'if-none-match': etag }, 304);
	const result = {
		clients: CLIENTS,
		seconds: SECONDS,
		htmlBytes: Buffer.byteLength(html),
		appPerSecond: Math.round(app.perSecond),
		barePerSecond: Math.round(plain.perSecond),
		ratio: Math.round((app.perSecond / plain.perSecond) * 1000) / 1000,
		gzipBytes: zipped.encoding === 'gzip' ? zipped.bytes : null,
		gzipPerSecond: Math.round(gzipped.perSecond),
		gzipRatio: Math.round((gzipped.perSecond / plain.perSecond) * 1000) / 1000,
		revalidatedPerSecond: Math.round(revalidated.perSecond),
		revalidatedRatio: Math.round((revalidated.perSecond / plain.perSecond) * 1000) / 1000,
		errors: app.errors + plain.errors + gzipped.errors + revalidated.errors,
		load: `${loadBefore} → ${load()}`
	};
	console.log(
		`Public record /m/${serial} (${(result.htmlBytes / 1024).toFixed(1)} KB), ${CLIENTS} clients × ${SECONDS} s: app ${result.appPerSecond} req/s, bare node:http ${result.barePerSecond} req/s → ratio ${result.ratio} (target ≥ 0.25); gzip (${((result.gzipBytes ?? 0) / 1024).toFixed(1)} KB) ${result.gzipPerSecond} req/s → ${result.gzipRatio}; with If-None-Match ${result.revalidatedPerSecond} req/s (304) → ${result.revalidatedRatio}; errors ${result.errors}; load ${result.load}`
	);
	if (asJson) console.log(JSON.stringify(result));
	if (result.errors) process.exitCode = 1;
} finally {
	bare?.kill('SIGTERM');
	server.stop();
}
