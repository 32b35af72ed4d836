// Benchmark: 100,000 factory test rows for existing serials through the real route and
// commit of the production server; compared with a plain multi-row insert into SQLite.
// Target (issue): ≥ 20,000 rows/s end to end, server memory growth < 300 MB.
import { createClient } from '@libsql/client';
import { readFileSync, rmSync, mkdirSync } from 'node:fs';
import { serialRun } from '$lib/domain/serial';
// @ts-expect-error plain JS helper
import { startBenchServer, signInCookie } from './lib/bench-server.js';

const N = Number(process.env.BENCH_ROWS ?? 100_000);
const dir = 'data/bench-import';

function rssMb(pid: number) {
	const status = readFileSync(`/proc/${pid}/status`, 'utf8');
	const get = (k: string) =>
		Number(/\s(\d+) kB/.exec(status.split('\n').find((l) => l.startsWith(k)) ?? '')?.[1] ?? 0) /
		1024;
	return { rss: get('VmRSS:'), peak: get('VmHWM:') };
}

async function runRound(round: number) {
	// 1. A register with N built modules of TC-HC-48 (prepared directly: the build step is not what is measured).
	rmSync(dir, { recursive: true, force: true });
	mkdirSync(dir, { recursive: true });
	const server = await startBenchServer({ port: 4197, dbDir: dir });
	const serials = serialRun('48', 2026, 1, N);
	const db = createClient({ url: `file:${dir}/bench.db` });
	const t0 = Date.now();
	for (let i = 0; i < N; i += 2000) {
		const chunk = serials.slice(i, i + 2000);
		await db.execute({
			sql: `INSERT INTO modules (serial, model_id, state, built_at, cell_lots, created_at) VALUES ${chunk.map(() => "(?, 3, 'built', ?, '[\"HCL-BENCH\"]', ?)").join(',')}`,
			args: chunk.flatMap((s) => [s, t0, t0])
		});
	}
	await db.execute({
		sql: "INSERT INTO serial_counters (variant, year, next) VALUES ('48', 2026, ?)",
		args: [N + 1]
	});

	// 2. The rig file.
	const header =
		'serial,tested_at,capacity_ah,energy_wh,dcir_mohm,ocv_v,cell_spread_mv,insulation_mohm,ambient_c,rig,operator';
	const base = Date.parse('2026-11-01T06:00:00Z');
	const rows = serials.map((s, i) => {
		const cap = (46.2 + ((i * 7919) % 100) / 100).toFixed(2);
		return `${s},${new Date(base + i * 1000).toISOString()},${cap},2390,${(5 + ((i * 31) % 10) / 10).toFixed(1)},51.3,${5 + (i % 9)},${500 + (i % 300)},22.5,RIG-B,bench`;
	});
	const csv = [header, ...rows].join('\r\n') + '\r\n';
	if (round === 0)
		console.log(`Rig file: ${N.toLocaleString('en-GB')} rows, ${(csv.length / 1e6).toFixed(1)} MB`);

	// 3. Through the real route: preview, then commit.
	const cookie = await signInCookie(server.origin, 'workshop@tidewater.example');
	const pid = server.proc.pid!;
	const mem0 = rssMb(pid);
	const tA = performance.now();
	const res = await fetch(`${server.origin}/api/imports/factory-tests?name=bench.csv`, {
		method: 'POST',
		headers: { cookie, 'content-type': 'text/csv' },
		body: csv
	});
	const preview = await res.json();
	const tB = performance.now();
	const memPreview = rssMb(pid);
	if (res.status !== 201 || preview.import.accepted !== N)
		throw new Error(`preview failed: ${res.status} ${JSON.stringify(preview).slice(0, 300)}`);
	const res2 = await fetch(`${server.origin}/api/imports/${preview.import.id}/commit`, {
		method: 'POST',
		headers: { cookie }
	});
	const committed = await res2.json();
	const tC = performance.now();
	if (!res2.ok || committed.import.status !== 'committed')
		throw new Error(`commit failed: ${JSON.stringify(committed).slice(0, 300)}`);
	const mem1 = rssMb(pid);
	const stored = Number((await db.execute('SELECT count(*) AS n FROM factory_tests')).rows[0].n);
	const inStock = Number(
		(
			await db.execute(
				"SELECT count(*) AS n FROM modules WHERE state IN ('in_stock','test_failed')"
			)
		).rows[0].n
	);
	if (stored !== N || inStock !== N) throw new Error(`stored ${stored}, states ${inStock}`);
	server.stop();
	db.close();
	await new Promise((r) => server.proc.once('exit', r));

	const secs = (tC - tA) / 1000;
	console.log(
		`Round: preview ${((tB - tA) / 1000).toFixed(2)} s, commit ${((tC - tB) / 1000).toFixed(2)} s, end to end ${secs.toFixed(2)} s = ${Math.round(N / secs).toLocaleString('en-GB')} rows/s`
	);
	console.log(
		`  server memory: RSS ${mem0.rss.toFixed(0)} → ${memPreview.rss.toFixed(0)} MB after preview → ${mem1.rss.toFixed(0)} MB after commit, peak ${mem1.peak.toFixed(0)} MB (growth of peak over start ${(mem1.peak - mem0.rss).toFixed(0)} MB)`
	);

	return { rowsPerSec: N / secs, growthMb: mem1.peak - mem0.rss, rows, secs };
}

const results = [];
for (let round = 0; round < 3; round++) results.push(await runRound(round));
const med = <T>(xs: T[], f: (x: T) => number) => xs.map(f).sort((a, b) => a - b)[1];
console.log(
	`Median of 3: ${Math.round(med(results, (r) => r.rowsPerSec)).toLocaleString('en-GB')} rows/s end to end (target ≥ 20,000); server memory growth ${med(results, (r) => r.growthMb).toFixed(0)} MB, worst ${Math.max(...results.map((r) => r.growthMb)).toFixed(0)} MB (target < 300 MB)`
);
const { rows } = results[0];
const secs = med(results, (r) => r.secs);

// 4. Reference: the same rows inserted straight into SQLite (multi-row INSERTs in one batch).
rmSync(`${dir}/plain.db`, { force: true });
const plainDb = createClient({ url: `file:${dir}/plain.db` });
await plainDb.execute(
	'CREATE TABLE t (module_id INTEGER, row_key TEXT UNIQUE, tested_at INTEGER, capacity_ah REAL, energy_wh REAL, dcir_mohm REAL, ocv_v REAL, cell_spread_mv REAL, insulation_mohm REAL, ambient_c REAL, rig TEXT, operator TEXT)'
);
const parsed = rows.map((r, i) => {
	const c = r.split(',');
	return [
		i + 1,
		`${c[0]}|${c[1]}|${c[9]}`,
		Date.parse(c[1]),
		+c[2],
		+c[3],
		+c[4],
		+c[5],
		+c[6],
		+c[7],
		+c[8],
		c[9],
		c[10]
	];
});
const tP = performance.now();
const stmts = [];
for (let i = 0; i < parsed.length; i += 500) {
	const chunk = parsed.slice(i, i + 500);
	stmts.push({
		sql: `INSERT INTO t VALUES ${chunk.map(() => '(?,?,?,?,?,?,?,?,?,?,?,?)').join(',')}`,
		args: chunk.flat()
	});
}
await plainDb.batch(stmts, 'write');
const plainSecs = (performance.now() - tP) / 1000;
console.log(
	`Plain insert of the same rows into SQLite: ${plainSecs.toFixed(2)} s = ${Math.round(N / plainSecs).toLocaleString('en-GB')} rows/s; the route end to end takes ${(secs / plainSecs).toFixed(1)}× as long`
);
process.exit(0);
