// Fleet table and traceability speed on the invented 200,000-module fleet (npm run seed:large),
// against the production build, with concurrent requests. Targets: GET /api/modules page of 50
// under any single filter or sort p95 < 50 ms; traceability by cell lot p95 < 200 ms.
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { startBenchServer, signInCookie } from './lib/bench-server.js';

const dbDir = 'data/bench-fleet';
const reuse = process.env.BENCH_REUSE === '1' && existsSync(`${dbDir}/bench.db`);
const CONCURRENCY = Number(process.env.BENCH_CONCURRENCY ?? 2);
const REQUESTS = 200;

async function load(origin, path, cookie) {
	const times = [];
	let next = 0;
	let failures = 0;
	const worker = async () => {
		while (next < REQUESTS) {
			next++;
			const t0 = performance.now();
			const res = await fetch(origin + path, { headers: { cookie } });
			await res.arrayBuffer();
			times.push(performance.now() - t0);
			if (!res.ok) failures++;
		}
	};
	await Promise.all(Array.from({ length: CONCURRENCY }, worker));
	times.sort((a, b) => a - b);
	const q = (p) => times[Math.min(times.length - 1, Math.ceil(p * times.length) - 1)];
	return { p50: q(0.5), p95: q(0.95), max: times.at(-1), failures };
}

let server;
if (reuse) server = await startBenchServer({ port: PORT, dbDir, seed: false, keep: true });
else {
	server = await startBenchServer({ port: PORT, dbDir, seed: false });
	server.stop();
	await new Promise((r) => setTimeout(r, 500));
	const s = spawnSync('npm', ['run', 'seed:large', '--silent'], {
		stdio: 'inherit',
		env: server.env
	});
	if (s.status !== 0) process.exit(1);
	server = await startBenchServer({ port: PORT, dbDir, seed: false, keep: true });
}
try {
	const admin = await signInCookie(server.origin, 'admin@tidewater.example');
	const dealer = await signInCookie(server.origin, 'dealer@saltmarsh.example');
	const first = await (
		await fetch(`${server.origin}/api/modules?pageSize=10&sort=serial&dir=asc`, {
			headers: { cookie: admin }
		})
	).json();
	console.log(`Fleet: ${first.total.toLocaleString('en-GB')} modules visible to the admin`);
	const lot = (
		await (
			await fetch(`${server.origin}/api/modules?pageSize=10`, { headers: { cookie: admin } })
		).json()
	).items[0].cellLots[0];
	const cases = [
		['admin, default (built, newest first)', '/api/modules?pageSize=50', admin],
		['admin, sort serial asc', '/api/modules?pageSize=50&sort=serial&dir=asc', admin],
		['admin, sort model', '/api/modules?pageSize=50&sort=model&dir=asc', admin],
		['admin, sort state', '/api/modules?pageSize=50&sort=state&dir=desc', admin],
		['admin, sort dealer', '/api/modules?pageSize=50&sort=dealer&dir=asc', admin],
		['admin, sort tested', '/api/modules?pageSize=50&sort=testedAt&dir=desc', admin],
		['admin, sort shipped', '/api/modules?pageSize=50&sort=shippedAt&dir=desc', admin],
		['admin, filter state=in_stock', '/api/modules?pageSize=50&state=in_stock', admin],
		['admin, filter model=TC-HC-24', '/api/modules?pageSize=50&model=TC-HC-24', admin],
		['admin, filter dealer=2', '/api/modules?pageSize=50&dealer=2', admin],
		[
			'admin, filter built in Jan 2026',
			'/api/modules?pageSize=50&builtFrom=2026-01-01&builtTo=2026-01-31',
			admin
		],
		[`admin, filter lot=${lot}`, `/api/modules?pageSize=50&lot=${encodeURIComponent(lot)}`, admin],
		['admin, free text serial prefix', '/api/modules?pageSize=50&q=PL48-25-0012', admin],
		['admin, page 400', '/api/modules?pageSize=50&page=400', admin],
		['dealer (scoped), default', '/api/modules?pageSize=50', dealer],
		['dealer (scoped), sort serial', '/api/modules?pageSize=50&sort=serial&dir=asc', dealer]
	];
	let worst = 0;
	console.log(`\n${CONCURRENCY} concurrent clients, ${REQUESTS} requests per case (ms)`);
	for (const [name, path, cookie] of cases) {
		const r = await load(server.origin, path, cookie);
		worst = Math.max(worst, r.p95);
		console.log(
			`${name.padEnd(40)} p50 ${r.p50.toFixed(1).padStart(6)}  p95 ${r.p95.toFixed(1).padStart(6)}  max ${r.max.toFixed(1).padStart(6)}${r.failures ? `  FAILURES ${r.failures}` : ''}`
		);
	}
	const t = await load(server.origin, `/api/trace?lot=${encodeURIComponent(lot)}`, admin);
	const tr = await (
		await fetch(`${server.origin}/api/trace?lot=${encodeURIComponent(lot)}`, {
			headers: { cookie: admin }
		})
	).json();
	console.log(
		`${`trace by cell lot ${lot} (${tr.total} modules)`.padEnd(40)} p50 ${t.p50.toFixed(1).padStart(6)}  p95 ${t.p95.toFixed(1).padStart(6)}  max ${t.max.toFixed(1).padStart(6)}`
	);
	console.log(
		`\nWorst fleet p95: ${worst.toFixed(1)} ms (target < 50 ms); trace p95 ${t.p95.toFixed(1)} ms (target < 200 ms)`
	);
} finally {
	server.stop();
}
