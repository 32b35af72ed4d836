// Benchmark: 100,000 factory test rows for existing serials through the real route and
// commit of the production server, against an anchor measured in the same round: the same
// rows as 500-row multi-row INSERTs in one `@libsql/client` batch into a table with
// factory_tests' columns and indexes (copied from the migrated database itself).
// Target (issue 17): route ≥ 0.75 × anchor rows/s, server memory growth < 100 MB.
// The longest event-loop stall of the server during preview and commit (target < 100 ms) is
// read from inside (GET /api/diagnostics/event-loop, Node's monitorEventLoopDelay, the server
// started with PACKLEDGER_DIAGNOSTICS=1) and from outside: a static file is fetched every
// 20 ms while the import runs, and its slowest answer is printed beside it.
// Beside the wall-clock figures, CPU seconds: the server's (all threads, /proc/PID/stat) for
// preview and commit and this process's for the anchor, with their ratio (`cpuRatio`), which
// a busy machine hardly changes; `load` is the 1-minute load average after each round.
// An extra anchor, labelled as such: the same rows through a synchronous native driver (one
// prepared INSERT in a transaction: better-sqlite3 when installed, else libsql), the
// "different driver path" issue 17 asks to measure; its fields `nativeDriver`,
// `nativeRowsPerSecond` and `ratioToNative` are added to the JSON line.
//
//   npm run bench:import [-- --json] [-- --rounds 3]   (BENCH_ROWS, BENCH_PORT; 127.0.0.1 only)
import { createClient } from '@libsql/client';
import { readFileSync, rmSync, mkdirSync } from 'node:fs';
import { loadavg } from 'node:os';
import { serialRun } from '$lib/domain/serial';
// @ts-expect-error plain JS helper
import { startBenchServer, signInCookie } from './lib/bench-server.js';

const args = process.argv.slice(2);
const asJson = args.includes('--json');
const rounds = Number(args[args.indexOf('--rounds') + 1] || 3) || 3;
const N = Number(process.env.BENCH_ROWS ?? 100_000);
const PORT = Number(process.env.BENCH_PORT ?? 4171);
const dir = 'data/bench-import';
const log = (s: string) => console.log(s);

function rssMb(pid: number) {
	const status = readFileSync(`/proc/${pid}/status`, 'utf8');
	const get = (k: string) => {
		const line = status.split('\n').find((l) => l.startsWith(k)) ?? '';
		return Number(line.replace(/[^0-9]/g, '')) / 1024;
	};
	return { rss: get('VmRSS:'), peak: get('VmHWM:') };
}

/**
 * CPU seconds the process has used, all its threads (the import writer's too), from
 * /proc/PID/stat (utime + stime, fields 14 and 15, in clock ticks of 1/100 s: proc(5)).
 * Unlike wall time, this hardly changes with what else the machine runs.
 */
function cpuS(pid: number) {
	const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
	const f = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
	return (Number(f[11]) + Number(f[12])) / 100;
}

/** Fetches a static file every 20 ms until stopped; returns the slowest answer in ms. */
function stallProbe(origin: string) {
	let stop = false;
	let worst = 0;
	let resets = 0;
	const done = (async () => {
		while (!stop) {
			const t0 = performance.now();
			// A reset counts as a stall too: while the event loop is held, adapter-node's
			// keep-alive timer fires late and closes the connection the next request waits on.
			await fetch(`${origin}/favicon.svg`)
				.then((r) => r.arrayBuffer())
				.catch(() => resets++);
			worst = Math.max(worst, performance.now() - t0);
			await new Promise((r) => setTimeout(r, 20));
		}
	})();
	return async () => {
		stop = true;
		await done;
		if (resets) console.log(`  probe: ${resets} request(s) reset while the event loop was held`);
		return worst;
	};
}

const HEADER =
	'serial,tested_at,capacity_ah,energy_wh,dcir_mohm,ocv_v,cell_spread_mv,insulation_mohm,ambient_c,rig,operator';

async function runRound(round: number) {
	// 1. The demo register plus N built modules of TC-HC-48, numbered after the demo's own
	// serials (prepared directly: the build step is not what is measured).
	rmSync(dir, { recursive: true, force: true });
	mkdirSync(dir, { recursive: true });
	const server = await startBenchServer({
		port: PORT,
		dbDir: dir,
		env: { PACKLEDGER_DIAGNOSTICS: '1' }
	});
	const db = createClient({ url: `file:${dir}/bench.db` });
	const counter = await db.execute(
		"SELECT next FROM serial_counters WHERE variant = '48' AND year = 2026"
	);
	const first = Number(counter.rows[0]?.next ?? 1);
	const serials = serialRun('48', 2026, first, N);
	const model = Number(
		(await db.execute("SELECT id FROM module_models WHERE code = 'TC-HC-48'")).rows[0].id
	);
	const t0 = Date.now();
	for (let i = 0; i < N; i += 2000) {
		const chunk = serials.slice(i, i + 2000);
		await db.execute({
			sql: `INSERT INTO modules (serial, model_id, state, built_at, cell_lots, created_at) VALUES ${chunk.map(() => `(?, ${model}, 'built', ?, '["HCL-BENCH"]', ?)`).join(',')}`,
			args: chunk.flatMap((s) => [s, t0, t0])
		});
	}
	await db.execute({
		sql: "INSERT INTO serial_counters (variant, year, next) VALUES ('48', 2026, ?) ON CONFLICT (variant, year) DO UPDATE SET next = excluded.next",
		args: [first + N]
	});
	await db.execute('PRAGMA wal_checkpoint(TRUNCATE)');

	// 2. The rig file.
	const base = Date.parse('2026-11-01T06:00:00Z');
	const rows = serials.map((s, i) => {
		const cap = (46.2 + ((i * 7919) % 100) / 100).toFixed(2);
		return `${s},${new Date(base + i * 1000).toISOString()},${cap},2390,${(5 + ((i * 31) % 10) / 10).toFixed(1)},51.3,${5 + (i % 9)},${500 + (i % 300)},22.5,RIG-B,bench`;
	});
	const csv = [HEADER, ...rows].join('\r\n') + '\r\n';
	if (round === 0)
		log(
			`Rig file: ${N.toLocaleString('en-GB')} rows, ${(csv.length / 1e6).toFixed(1)} MB; load ${loadavg()
				.map((l) => l.toFixed(2))
				.join(' ')}`
		);

	// 3. Through the real route: preview, then commit.
	const cookie = await signInCookie(server.origin, 'workshop@tidewater.example');
	const adminCookie = await signInCookie(server.origin, 'admin@tidewater.example');
	const loopDelay = async (reset: boolean) => {
		const r = await fetch(`${server.origin}/api/diagnostics/event-loop${reset ? '?reset=1' : ''}`, {
			headers: { cookie: adminCookie }
		});
		if (!r.ok) throw new Error(`diagnostics: ${r.status} ${await r.text()}`);
		return (await r.json()) as { maxMs: number; memoryMB: Record<string, number> };
	};
	const pid = server.proc.pid!;
	await fetch(`${server.origin}/favicon.svg`);
	// The first import of a fresh server loads and compiles the import route's modules and
	// starts the writer's thread (one-off, a few hundred ms on a loaded machine): its longest
	// stall is printed apart (`coldStallMs`); a one-row file of an unknown serial does it
	// before the measured import, which is the one the figures are about.
	await loopDelay(true);
	const warm = await fetch(`${server.origin}/api/imports/factory-tests?name=warm-up.csv`, {
		method: 'POST',
		headers: { cookie, 'content-type': 'text/csv' },
		body: `${HEADER}\r\nTC48-26-9999999,2026-11-01T05:00:00Z,46.5,2390,5.2,51.3,6,600,22.5,RIG-W,bench\r\n`
	});
	if (!warm.ok) throw new Error(`warm-up import: ${warm.status} ${await warm.text()}`);
	const coldStallMs = (await loopDelay(false)).maxMs;
	await loopDelay(true);
	await new Promise((r) => setTimeout(r, 200));
	await loopDelay(true);
	const mem0 = rssMb(pid);
	const probe = stallProbe(server.origin);
	// The server's heap and buffers every 100 ms (where memory growth goes, when it grows).
	const heap = { heapUsed: 0, external: 0, arrayBuffers: 0 };
	let sampling = true;
	const sampler = (async () => {
		while (sampling) {
			const m = (await loopDelay(false)).memoryMB;
			for (const k of Object.keys(heap) as (keyof typeof heap)[]) heap[k] = Math.max(heap[k], m[k]);
			await new Promise((r) => setTimeout(r, 100));
		}
	})();
	const cpuA = cpuS(pid);
	const tA = performance.now();
	const res = await fetch(`${server.origin}/api/imports/factory-tests?name=bench.csv`, {
		method: 'POST',
		headers: { cookie, 'content-type': 'text/csv' },
		body: csv
	});
	const preview = await res.json();
	const tB = performance.now();
	const cpuB = cpuS(pid);
	if (res.status !== 201 || preview.import.accepted !== N)
		throw new Error(`preview failed: ${res.status} ${JSON.stringify(preview).slice(0, 300)}`);
	const res2 = await fetch(`${server.origin}/api/imports/${preview.import.id}/commit`, {
		method: 'POST',
		headers: { cookie }
	});
	const committed = await res2.json();
	const tC = performance.now();
	const cpuC = cpuS(pid);
	const probeMs = await probe();
	sampling = false;
	await sampler;
	const stallMs = (await loopDelay(false)).maxMs;
	if (!res2.ok || committed.import.status !== 'committed')
		throw new Error(`commit failed: ${JSON.stringify(committed).slice(0, 300)}`);
	const mem1 = rssMb(pid);
	const stored = Number(
		(
			await db.execute({
				sql: 'SELECT count(*) AS n FROM factory_tests WHERE import_id = ?',
				args: [preview.import.id]
			})
		).rows[0].n
	);
	const inStock = Number(
		(
			await db.execute({
				sql: "SELECT count(*) AS n FROM modules WHERE state IN ('in_stock','test_failed') AND serial >= ? AND serial <= ?",
				args: [serials[0], serials[N - 1]]
			})
		).rows[0].n
	);
	if (stored !== N || inStock !== N) throw new Error(`stored ${stored}, states ${inStock}`);
	const schemaSql = (
		await db.execute(
			"SELECT sql FROM sqlite_master WHERE tbl_name = 'factory_tests' AND sql IS NOT NULL AND type IN ('table', 'index') ORDER BY type = 'index'"
		)
	).rows.map((r) => String(r.sql));
	server.stop();
	db.close();
	await new Promise((r) => server.proc.once('exit', r));

	// 4. The anchor: the same rows, as the register stores them, into an empty copy of the table.
	rmSync(`${dir}/anchor.db`, { force: true });
	const anchorDb = createClient({ url: `file:${dir}/anchor.db` });
	await anchorDb.execute('PRAGMA journal_mode = WAL');
	// The table alone: its foreign keys name tables this file does not have.
	await anchorDb.execute('PRAGMA foreign_keys = OFF');
	for (const s of schemaSql) await anchorDb.execute(s);
	const cols = (await anchorDb.execute('PRAGMA table_info(factory_tests)')).rows
		.map((r) => String(r.name))
		.filter((c) => c !== 'id');
	const values = rows.map((r, i) => {
		const c = r.split(',');
		const v: Record<string, unknown> = {
			module_id: i + 1,
			import_id: 1,
			row_key: `${c[0]}\u001f${Date.parse(c[1])}\u001f${c[9]}`,
			tested_at: Date.parse(c[1]),
			capacity_ah: +c[2],
			energy_wh: +c[3],
			dcir_mohm: +c[4],
			dcir_source: 'measured',
			ocv_v: +c[5],
			cell_spread_mv: +c[6],
			insulation_mohm: +c[7],
			ambient_c: +c[8],
			rig: c[9],
			operator: c[10],
			outcome: 'pass',
			failures: '[]'
		};
		return cols.map((k) => (v[k] ?? null) as string | number | null);
	});
	const tP = performance.now();
	const anchorCpu0 = process.cpuUsage();
	// No checkpoint inside the anchor's COMMIT: the route's runs on the import writer's thread
	// after its answer (src/lib/server/services/import-writer.ts), so neither pays one in its
	// measured time. Set in the batch itself: @libsql/client may run a batch on a fresh
	// connection.
	const stmts: { sql: string; args?: (string | number | null)[] }[] = [
		{ sql: 'PRAGMA wal_autocheckpoint = 0' }
	];
	const tuple = `(${cols.map(() => '?').join(',')})`;
	for (let i = 0; i < values.length; i += 500) {
		const chunk = values.slice(i, i + 500);
		stmts.push({
			sql: `INSERT INTO factory_tests (${cols.join(',')}) VALUES ${chunk.map(() => tuple).join(',')}`,
			args: chunk.flat()
		});
	}
	await anchorDb.batch(stmts, 'write');
	const anchorS = (performance.now() - tP) / 1000;
	const anchorCpu = process.cpuUsage(anchorCpu0);
	const anchorCpuS = (anchorCpu.user + anchorCpu.system) / 1e6;
	anchorDb.close();

	// 5. An extra anchor, for comparison only (the app keeps @libsql/client): what a different
	// driver path gives for the same rows into another empty copy of the table, through a
	// synchronous native driver with one prepared single-row INSERT in one transaction.
	const native = await nativeAnchor(schemaSql, cols, values);
	const betterS = native?.seconds ?? null;

	const secs = (tC - tA) / 1000;
	const r = {
		rowsPerSecond: N / secs,
		anchorRowsPerSecond: N / anchorS,
		ratio: anchorS / secs,
		memoryGrowthMB: mem1.peak - mem0.rss,
		previewS: (tB - tA) / 1000,
		commitS: (tC - tB) / 1000,
		// CPU seconds (all threads) of the server for the route and of this process for the
		// anchor: a second, load-independent view (the server's also include the probe's and
		// the memory sampler's requests, a few per cent).
		previewCpuS: cpuB - cpuA,
		commitCpuS: cpuC - cpuB,
		anchorCpuS,
		cpuRatio: anchorCpuS / (cpuC - cpuA),
		nativeDriver: native?.driver ?? null,
		nativeRowsPerSecond: betterS === null ? null : N / betterS,
		stallMs,
		coldStallMs,
		probeMs,
		load: loadavg()[0]
	};
	log(
		`Round ${round + 1}: preview ${r.previewS.toFixed(2)} s, commit ${r.commitS.toFixed(2)} s → ${Math.round(r.rowsPerSecond).toLocaleString('en-GB')} rows/s; anchor ${anchorS.toFixed(2)} s → ${Math.round(r.anchorRowsPerSecond).toLocaleString('en-GB')} rows/s; ratio ${r.ratio.toFixed(2)}${betterS === null ? '' : `; ${native?.driver} ${betterS.toFixed(2)} s → ${Math.round(N / betterS).toLocaleString('en-GB')} rows/s (route ${(betterS / secs).toFixed(2)} of it)`}; CPU preview ${r.previewCpuS.toFixed(2)} s + commit ${r.commitCpuS.toFixed(2)} s, anchor ${r.anchorCpuS.toFixed(2)} s (ratio ${r.cpuRatio.toFixed(2)}); server memory ${mem0.rss.toFixed(0)} → peak ${mem1.peak.toFixed(0)} MB (+${r.memoryGrowthMB.toFixed(0)}; peak heap ${heap.heapUsed} MB, external ${heap.external} MB of which buffers ${heap.arrayBuffers} MB); event loop held ≤ ${stallMs.toFixed(0)} ms (first import of the server ${coldStallMs.toFixed(0)} ms; slowest probe ${probeMs.toFixed(0)} ms); load ${r.load.toFixed(2)}`
	);
	return r;
}

/**
 * Seconds for the rows through a synchronous native driver with one prepared INSERT in one
 * transaction: `better-sqlite3` when it is installed (not a dependency: it compiles from
 * source here, `npm install --no-save better-sqlite3@12.11.1` to add it), else `libsql`, the
 * native driver under `@libsql/client` with the same API, which the request path's reader
 * already uses. Null when neither loads.
 */
async function nativeAnchor(
	schemaSql: string[],
	cols: string[],
	values: (string | number | null)[][]
): Promise<{ seconds: number; driver: string } | null> {
	type NativeDb = {
		pragma(s: string): unknown;
		exec(s: string): unknown;
		prepare(s: string): { run(...a: unknown[]): unknown };
		transaction(f: () => void): () => void;
		close(): void;
	};
	let b: NativeDb | null = null;
	let driver = '';
	const file = `${dir}/anchor-native.db`;
	rmSync(file, { force: true });
	for (const name of ['better-sqlite3', 'libsql']) {
		try {
			const Database = (await import(/* @vite-ignore */ name)).default as new (
				f: string
			) => NativeDb;
			b = new Database(file);
			driver = name;
			break;
		} catch (e) {
			log(`  (${name} anchor not available: ${(e as Error).message.split('\n')[0]})`);
		}
	}
	if (!b) return null;
	b.pragma('journal_mode = WAL');
	// As for the libSQL anchor: the table alone, its foreign keys name tables this file lacks.
	b.pragma('foreign_keys = OFF');
	for (const s of schemaSql) b.exec(s);
	const insert = b.prepare(
		`INSERT INTO factory_tests (${cols.join(',')}) VALUES (${cols.map(() => '?').join(',')})`
	);
	const t0 = performance.now();
	b.transaction(() => {
		for (const v of values) insert.run(v);
	})();
	const seconds = (performance.now() - t0) / 1000;
	b.close();
	return { seconds, driver };
}

const results = [];
for (let round = 0; round < rounds; round++) results.push(await runRound(round));
type R = (typeof results)[number];
const stats = (f: (r: R) => number) => {
	const xs = results.map(f).sort((a, b) => a - b);
	return { min: xs[0], median: xs[Math.floor(xs.length / 2)], max: xs[xs.length - 1] };
};
const show = (name: string, f: (r: R) => number, digits = 0, unit = '') => {
	const s = stats(f);
	const n = (v: number) =>
		v.toLocaleString('en-GB', { maximumFractionDigits: digits, minimumFractionDigits: digits });
	log(`  ${name.padEnd(22)} min ${n(s.min)}  median ${n(s.median)}  max ${n(s.max)}${unit}`);
	return s.median;
};
log(
	`\n${rounds} rounds of ${N.toLocaleString('en-GB')} rows (targets: ratio ≥ 0.75, growth < 100 MB, stall < 100 ms)`
);
const summary = {
	rowsPerSecond: Math.round(show('route rows/s', (r) => r.rowsPerSecond)),
	anchorRowsPerSecond: Math.round(show('anchor rows/s', (r) => r.anchorRowsPerSecond)),
	ratio: Number(show('ratio', (r) => r.ratio, 2).toFixed(3)),
	memoryGrowthMB: Number(show('memory growth', (r) => r.memoryGrowthMB, 0, ' MB').toFixed(1)),
	previewS: Number(show('preview', (r) => r.previewS, 2, ' s').toFixed(3)),
	commitS: Number(show('commit', (r) => r.commitS, 2, ' s').toFixed(3)),
	previewCpuS: Number(show('preview CPU', (r) => r.previewCpuS, 2, ' s').toFixed(3)),
	commitCpuS: Number(show('commit CPU', (r) => r.commitCpuS, 2, ' s').toFixed(3)),
	anchorCpuS: Number(show('anchor CPU', (r) => r.anchorCpuS, 2, ' s').toFixed(3)),
	cpuRatio: Number(show('CPU ratio', (r) => r.cpuRatio, 2).toFixed(3)),
	load: Number(show('load (1 min)', (r) => r.load, 2).toFixed(2)),
	...(results.every((r) => r.nativeRowsPerSecond !== null)
		? (() => {
				const driver = results[0].nativeDriver;
				const better = Math.round(show(`${driver} rows/s`, (r) => r.nativeRowsPerSecond ?? 0));
				return {
					nativeDriver: driver,
					nativeRowsPerSecond: better,
					ratioToNative: Number(
						show(
							`ratio to ${driver}`,
							(r) => r.rowsPerSecond / (r.nativeRowsPerSecond ?? 1),
							2
						).toFixed(3)
					)
				};
			})()
		: {}),
	maxStallMs: Math.round(show('event-loop stall', (r) => r.stallMs, 0, ' ms')),
	coldStallMs: Math.round(show('first-import stall', (r) => r.coldStallMs, 0, ' ms')),
	probeMs: Math.round(show('slowest probe', (r) => r.probeMs, 0, ' ms'))
};
if (asJson) console.log(JSON.stringify(summary));
process.exit(0);
