// Many people at once: CLIENTS concurrent clients for DURATION seconds against the production
// build on 127.0.0.1 (BENCH_PORT), each sending one request after another with a short random
// pause: reads (fleet page, a module's record, its public page), design checks and small rig
// imports (20 rows, previewed and stored in one call). Part-way through, one large import
// (BIG rows) is sent as well. Every request has a 10 s timeout; a timeout, a reset or an
// answer that is not 2xx counts as an error.
// Targets (issue 17): 0 errors, p99 < 1 s, no request over 3 s, and the server's longest
// event-loop stall < 100 ms — read from inside the server (GET /api/diagnostics/event-loop,
// Node's monitorEventLoopDelay; the server runs with PACKLEDGER_DIAGNOSTICS=1).
//
//   npm run bench:load [-- --clients 200] [-- --duration 60] [-- --warmup 15] [-- --big 20000] [-- --think 100]
//                      [-- --only fleet,record,public,design,import] [-- --processes N] [-- --json]
import { createClient } from '@libsql/client';
import { loadavg } from 'node:os';
import { serialRun } from '$lib/domain/serial';
// @ts-expect-error plain JS helper
import { startBenchServer, signInCookie } from './lib/bench-server.js';

const args = process.argv.slice(2);
const opt = (name: string, fallback: number) => {
	const i = args.indexOf(name);
	return i >= 0 && args[i + 1] !== undefined ? Number(args[i + 1]) : fallback;
};
const CLIENTS = Math.min(opt('--clients', 200), 1000);
const DURATION_S = Math.min(opt('--duration', 60), 600);
const BIG = Math.min(opt('--big', 20_000), 200_000);
const THINK_MS = opt('--think', 100);
// The same load for WARMUP_S seconds first, not counted (a fresh server compiles its routes
// and its JIT settles over its first ~10,000 requests); --warmup 0 measures from a cold start.
const WARMUP_S = Math.min(opt('--warmup', 15), 600);
const asJson = args.includes('--json');
// --processes N: the build as N cluster workers behind the one port (scripts/cluster.js);
// the default, 0, is one `node build`. The event-loop figures are then one worker's.
const PROCESSES = Math.max(0, Math.min(Math.trunc(opt('--processes', 0)), 16));
const ONLY = (() => {
	const i = args.indexOf('--only');
	return i >= 0 && args[i + 1] ? args[i + 1].split(',') : null;
})();
const PORT = Number(process.env.BENCH_PORT ?? 4173);
const dbDir = 'data/bench-load';
const log = (s: string) => console.log(s);
const TIMEOUT_MS = 10_000;
const MODULES = 5_000;

// 1. The demo register plus MODULES built modules of TC-HC-48 the imports can test.
const server = await startBenchServer({
	port: PORT,
	dbDir,
	env: { PACKLEDGER_DIAGNOSTICS: '1' },
	processes: PROCESSES
});
const origin = server.origin;
const db = createClient({ url: `file:${dbDir}/bench.db` });
const model = Number(
	(await db.execute("SELECT id FROM module_models WHERE code = 'TC-HC-48'")).rows[0].id
);
const counter = await db.execute(
	"SELECT next FROM serial_counters WHERE variant = '48' AND year = 2026"
);
const first = Number(counter.rows[0]?.next ?? 1);
const serials = serialRun('48', 2026, first, MODULES + BIG);
const now0 = Date.now();
for (let i = 0; i < serials.length; i += 2000) {
	const chunk = serials.slice(i, i + 2000);
	await db.execute({
		sql: `INSERT INTO modules (serial, model_id, state, built_at, cell_lots, created_at) VALUES ${chunk.map(() => `(?, ${model}, 'built', ?, '["HCL-LOAD"]', ?)`).join(',')}`,
		args: chunk.flatMap((s) => [s, now0, now0])
	});
}
await db.execute({
	sql: "INSERT INTO serial_counters (variant, year, next) VALUES ('48', 2026, ?) ON CONFLICT (variant, year) DO UPDATE SET next = excluded.next",
	args: [first + serials.length]
});
const known = (
	await db.execute(
		"SELECT serial FROM modules WHERE cell_lots NOT LIKE '%HCL-LOAD%' AND state <> 'allocated' LIMIT 200"
	)
).rows.map((r) => String(r.serial));
await db.execute('PRAGMA wal_checkpoint(TRUNCATE)');
db.close();

const workshop = await signInCookie(origin, 'workshop@tidewater.example');
const admin = await signInCookie(origin, 'admin@tidewater.example');
const HEADER =
	'serial,tested_at,capacity_ah,energy_wh,dcir_mohm,ocv_v,cell_spread_mv,insulation_mohm,ambient_c,rig,operator';
let sent = 0;
/** A rig file of `n` rows for the given serials, each at its own instant (no two files alike). */
function rigFile(list: string[]) {
	const base = Date.parse('2026-11-01T00:00:00Z') + sent++ * 100_000;
	const rows = list.map(
		(s, i) =>
			`${s},${new Date(base + i * 1000).toISOString()},${(46 + (i % 10) / 10).toFixed(1)},2390,5.2,51.3,8,520,22.5,RIG-L,load`
	);
	return [HEADER, ...rows].join('\r\n') + '\r\n';
}
const pick = <T>(xs: T[]): T => xs[Math.floor(Math.random() * xs.length)];

/** The operations and their share of the requests. */
const OPS = [
	{
		kind: 'fleet',
		share: 25,
		run: () => get(`/api/modules?page=${1 + Math.floor(Math.random() * 20)}&pageSize=50`, workshop)
	},
	{ kind: 'record', share: 20, run: () => get(`/api/modules/${pick(known)}`, workshop) },
	{ kind: 'public', share: 20, run: () => get(`/m/${pick(known)}`, null, 'text/html') },
	{
		kind: 'design',
		share: 20,
		run: () =>
			send(
				'/api/design-check',
				workshop,
				'application/json',
				JSON.stringify({
					model: 'TC-HC-48',
					series: 1 + Math.floor(Math.random() * 8),
					parallel: 1 + Math.floor(Math.random() * 3),
					inverter: { minV: 40, maxV: 450 }
				})
			)
	},
	{
		kind: 'import',
		share: 15,
		run: () => {
			const start = Math.floor(Math.random() * (MODULES - 20));
			return send(
				'/api/imports/factory-tests?commit=accepted&name=load.csv',
				workshop,
				'text/csv',
				rigFile(serials.slice(start, start + 20))
			);
		}
	}
];
// --only fleet,record: just those operations (to measure one kind's cost on its own).
if (ONLY) OPS.splice(0, OPS.length, ...OPS.filter((o) => ONLY.includes(o.kind)));
const totalShare = OPS.reduce((a, o) => a + o.share, 0);
const chooseOp = () => {
	let r = Math.random() * totalShare;
	for (const o of OPS) if ((r -= o.share) < 0) return o;
	return OPS[0];
};

async function get(path: string, cookie: string | null, accept = 'application/json') {
	const res = await fetch(origin + path, {
		headers: { accept, ...(cookie ? { cookie } : {}) },
		signal: AbortSignal.timeout(TIMEOUT_MS)
	});
	await res.arrayBuffer();
	return res.status;
}
async function send(path: string, cookie: string, type: string, body: string) {
	const res = await fetch(origin + path, {
		method: 'POST',
		headers: { cookie, 'content-type': type, origin },
		body,
		signal: AbortSignal.timeout(TIMEOUT_MS)
	});
	await res.arrayBuffer();
	return res.status;
}
const loopDelay = async (reset: boolean) => {
	const r = await fetch(`${origin}/api/diagnostics/event-loop${reset ? '?reset=1' : ''}`, {
		headers: { cookie: admin }
	});
	if (!r.ok) throw new Error(`diagnostics: ${r.status} ${await r.text()}`);
	return r.json();
};

// 2. Warm up (one of each), then the run.
for (const o of OPS) {
	const status = await o.run();
	if (status >= 300) throw new Error(`warm-up ${o.kind} answered ${status}`);
}
log(
	`${CLIENTS} clients for ${DURATION_S} s after ${WARMUP_S} s of warm-up (pause 0–${THINK_MS} ms), one import of ${BIG.toLocaleString('en-GB')} rows at ${Math.round(DURATION_S / 3)} s; load ${loadavg()
		.map((l) => l.toFixed(2))
		.join(' ')}`
);
await loopDelay(true);
const samples: { kind: string; ms: number; ok: boolean; at: number }[] = [];
const errors = new Map<string, number>();
const t0 = performance.now() + WARMUP_S * 1000;
const until = t0 + DURATION_S * 1000;
// The server's event-loop figures count from the end of the warm-up.
const warmedUp = new Promise((r) => setTimeout(r, WARMUP_S * 1000)).then(() => loopDelay(true));
async function client() {
	await new Promise((r) => setTimeout(r, Math.random() * 1000));
	while (performance.now() < until) {
		const op = chooseOp();
		const s = performance.now();
		const counted = s >= t0;
		let ok = false;
		try {
			const status = await op.run();
			ok = status >= 200 && status < 300;
			if (!ok && counted)
				errors.set(`${op.kind} ${status}`, (errors.get(`${op.kind} ${status}`) ?? 0) + 1);
		} catch (e) {
			const err = e as Error & { cause?: { code?: string } };
			const k = `${op.kind} ${err.cause?.code ?? err.name}`;
			if (counted) errors.set(k, (errors.get(k) ?? 0) + 1);
		}
		if (counted) samples.push({ kind: op.kind, ms: performance.now() - s, ok, at: s - t0 });
		await new Promise((r) => setTimeout(r, Math.random() * THINK_MS));
	}
}
let big: { rows: number; seconds: number; status: number | string } | null = null;
const bigRun = (async () => {
	if (BIG <= 0) return;
	await new Promise((r) => setTimeout(r, WARMUP_S * 1000 + (DURATION_S * 1000) / 3));
	const s = performance.now();
	const status = await send(
		'/api/imports/factory-tests?commit=accepted&name=big.csv',
		workshop,
		'text/csv',
		rigFile(serials.slice(MODULES, MODULES + BIG))
	).catch((e: Error & { cause?: { code?: string } }) => e.cause?.code ?? e.name);
	big = { rows: BIG, seconds: (performance.now() - s) / 1000, status };
})();
await Promise.all([...Array.from({ length: CLIENTS }, client), bigRun, warmedUp]);
const elapsed = (performance.now() - t0) / 1000;
const loop = await loopDelay(false);
server.stop();
await new Promise((r) => server.proc.once('exit', r));

// 3. Figures.
const q = (xs: number[], p: number) =>
	xs[Math.min(xs.length - 1, Math.max(0, Math.ceil(p * xs.length) - 1))];
const figures = (list: typeof samples) => {
	const ms = list.map((x) => x.ms).sort((a, b) => a - b);
	return {
		requests: ms.length,
		errors: list.filter((x) => !x.ok).length,
		p50: Math.round(q(ms, 0.5)),
		p95: Math.round(q(ms, 0.95)),
		p99: Math.round(q(ms, 0.99)),
		max: Math.round(ms.at(-1) ?? 0),
		over3s: ms.filter((m) => m > 3000).length
	};
};
const all = figures(samples);
const byKind = Object.fromEntries(
	OPS.map((o) => [o.kind, figures(samples.filter((x) => x.kind === o.kind))])
);
for (const [k, f] of Object.entries(byKind))
	log(
		`  ${k.padEnd(8)} ${String(f.requests).padStart(6)} requests, ${f.errors} errors; p50 ${f.p50} ms, p95 ${f.p95} ms, p99 ${f.p99} ms, max ${f.max} ms`
	);
log(
	`All: ${all.requests} requests (${Math.round(all.requests / elapsed)}/s), ${all.errors} errors, p99 ${all.p99} ms, max ${all.max} ms, ${all.over3s} over 3 s; event loop held ≤ ${loop.maxMs} ms (p99 ${loop.p99Ms} ms)${big ? `; the ${BIG.toLocaleString('en-GB')}-row import took ${big.seconds.toFixed(1)} s (status ${big.status})` : ''}; load ${loadavg()[0].toFixed(2)}`
);
// When the slow ones were sent: requests over 1 s in each 10-s window of the run.
const windows = Array.from(
	{ length: Math.ceil(DURATION_S / 10) },
	(_, w) => samples.filter((x) => x.ms > 1000 && Math.floor(x.at / 10_000) === w).length
);
log(`  over 1 s by 10-s window: ${windows.join(' ')}`);
if (errors.size) log(`  errors: ${[...errors].map(([k, n]) => `${k} ×${n}`).join(', ')}`);
log('  targets: 0 errors, p99 < 1000 ms, none over 3 s, event-loop stall < 100 ms');
if (asJson)
	console.log(
		JSON.stringify({
			clients: CLIENTS,
			durationS: DURATION_S,
			warmupS: WARMUP_S,
			processes: PROCESSES,
			requests: all.requests,
			rps: Math.round(all.requests / elapsed),
			errors: all.errors,
			p50: all.p50,
			p95: all.p95,
			p99: all.p99,
			max: all.max,
			over3s: all.over3s,
			eventLoopMaxMs: loop.maxMs,
			eventLoopP99Ms: loop.p99Ms,
			bigImport: big,
			byKind,
			load: Number(loadavg()[0].toFixed(2))
		})
	);
process.exit(0);
