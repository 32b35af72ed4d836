// Times the A4 label sheet for 1,000 serials through the production server (median of 5).
// Target (issue 17): < 250 ms, HTML half of what it was when each QR was sent twice.
//
//   npm run bench:labels [-- --json]   (BENCH_PORT)
import { loadavg } from 'node:os';
import { startBenchServer, signInCookie } from './lib/bench-server.js';

const asJson = process.argv.includes('--json');

const server = await startBenchServer({
	port: Number(process.env.BENCH_PORT ?? 4173),
	dbDir: 'data/bench-labels'
});
try {
	const cookie = await signInCookie(server.origin, 'workshop@tidewater.example');
	const form = new URLSearchParams({ modelId: '3', count: '1000' });
	const res = await fetch(`${server.origin}/allocations?/allocate`, {
		method: 'POST',
		redirect: 'manual',
		headers: {
			cookie,
			origin: server.origin,
			accept: 'text/html',
			'content-type': 'application/x-www-form-urlencoded'
		},
		body: form
	});
	const loc = res.headers.get('location');
	if (!loc) throw new Error(`allocation failed: ${res.status} ${await res.text()}`);
	const times = [];
	let bytes = 0;
	for (let i = 0; i < 5; i++) {
		const t0 = performance.now();
		const page = await fetch(`${server.origin}${loc}/labels?format=a4`, {
			headers: { cookie, 'accept-encoding': 'identity' }
		});
		const html = await page.text();
		times.push(performance.now() - t0);
		bytes = html.length;
		const n = (html.match(/class="module-label/g) ?? []).length;
		if (n !== 1000) throw new Error(`expected 1000 labels, got ${n}`);
	}
	times.sort((a, b) => a - b);
	// The same sheet as a browser receives it (gzip).
	const zipped = await fetch(`${server.origin}${loc}/labels?format=a4`, {
		headers: { cookie, 'accept-encoding': 'gzip' }
	});
	const gzipBytes = Number(zipped.headers.get('content-length'));
	await zipped.arrayBuffer();
	console.log(
		`A4 sheet of 1,000 labels (server render incl. 1,000 QR SVGs): median ${times[2].toFixed(0)} ms, min ${times[0].toFixed(0)} ms, max ${times[4].toFixed(0)} ms, ${(bytes / 1e6).toFixed(2)} MB HTML (${(gzipBytes / 1e6).toFixed(2)} MB gzip); load ${loadavg()[0].toFixed(2)}`
	);
	if (asJson)
		console.log(
			JSON.stringify({
				labels: 1000,
				medianMs: Math.round(times[2]),
				minMs: Math.round(times[0]),
				maxMs: Math.round(times[4]),
				htmlBytes: bytes,
				gzipBytes,
				load: loadavg()[0]
			})
		);
} finally {
	server.stop();
}
