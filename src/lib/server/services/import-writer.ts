import { Worker } from 'node:worker_threads';
import type { InStatement, InValue } from '@libsql/client';
import type { Db } from '$lib/server/db';

/**
 * Where an import writes. `@libsql/client` runs a local file's SQL synchronously on the
 * calling thread, and a large import's writes end in a COMMIT that syncs and checkpoints tens
 * of megabytes of WAL (measured 0.45–0.75 s on the 2-core bench machine): on the server's
 * main thread that would hold every other request. So for a local file the import's writes
 * run on a worker thread with its own connection to the same file; the main thread only
 * waits for messages. Through a remote libSQL server (`libsql://`, `http(s)://`) the client is
 * already asynchronous and is used as it is. Callers hold `withWriteLock` around every use,
 * so the worker never holds a transaction another writer of this process would wait on
 * inside SQLite. The worker's connection does not checkpoint inside its COMMIT (SQLite's
 * automatic checkpoint would copy a large import's tens of megabytes of WAL into the
 * database file before the commit returns): it answers first, then runs a PASSIVE checkpoint
 * (sqlite.org/wal.html#ckpt, sqlite.org/pragma.html#pragma_wal_checkpoint).
 */
export interface StatementResult {
	rowsAffected: number;
	lastInsertRowid?: bigint | null;
}

export interface WriteTx {
	execute(stmt: InStatement): Promise<StatementResult>;
	batch(stmts: InStatement[]): Promise<StatementResult[]>;
	commit(): Promise<void>;
	rollback(): Promise<void>;
	close(): void;
	/** Plan slices a large commit sends per `batch` (1 when absent). */
	slicesPerMessage?: number;
}

/** An argument of a unit's statement: a value, or the row id an earlier statement of the unit inserted. */
export type UnitArg = InValue | { ref: number };
export interface UnitStatement {
	sql: string;
	args: UnitArg[];
}

export interface ImportWriter {
	/** One statement, its own transaction. */
	execute(stmt: InStatement): Promise<{ rowsAffected: number }>;
	/** Statements as one transaction; each one's `lastInsertRowid`. */
	batch(stmts: InStatement[]): Promise<{ rowsAffected: number; lastInsertRowid: bigint | null }[]>;
	/** An open write transaction (BEGIN IMMEDIATE). */
	transaction(): Promise<WriteTx>;
	/**
	 * Statements as one transaction in one message, in order, where an argument `{ ref: i }`
	 * is the row id statement `i` of the unit inserted: a small import is stored without a
	 * round trip per step (each of which would wait for the server's event loop).
	 */
	unit(stmts: (InStatement | UnitStatement)[]): Promise<StatementResult[]>;
}

/** The statement with its `{ ref }` arguments replaced by the row ids of earlier results. */
export function resolveRefs(
	stmt: InStatement | UnitStatement,
	done: StatementResult[]
): InStatement {
	if (typeof stmt === 'string' || !Array.isArray(stmt.args)) return stmt as InStatement;
	return {
		sql: stmt.sql,
		args: stmt.args.map((a) =>
			a !== null && typeof a === 'object' && 'ref' in a ? (done[a.ref]?.lastInsertRowid ?? null) : a
		)
	};
}

// CommonJS, run with `eval`: `require` resolves from the working directory, where the
// production server's node_modules are. One transaction at a time (callers hold the lock).
const WORKER_SOURCE = `
const { parentPort, workerData } = require('node:worker_threads');
const { createClient } = require('@libsql/client');
const client = createClient({ url: workerData.url, timeout: 5000 });
// This writer checkpoints after answering, not inside its COMMITs (see below).
// @libsql/client keeps a pool of connections and a transaction may get a fresh one, so the
// setting goes with every transaction: without it a COMMIT on a new connection checkpoints
// inside itself (SQLite's default, 1,000 pages), which after a large import meant copying
// and syncing a long WAL inside small imports' commits.
const NO_AUTO_CHECKPOINT = 'PRAGMA wal_autocheckpoint = 0';
const ready = client.execute(NO_AUTO_CHECKPOINT);
const CKPT_IDLE_MS = 25;
const CKPT_WRITES = 32;
let writes = 0;
let timer = null;
const checkpoint = () => {
	if (timer) clearTimeout(timer);
	timer = null;
	writes = 0;
	return client.execute('PRAGMA wal_checkpoint(PASSIVE)').catch(() => {});
};
let tx = null;
const ref = (a, done) => (a !== null && typeof a === 'object' && 'ref' in a ? (done[a.ref] ? done[a.ref].lastInsertRowid : null) : a);
const plain = (r) => ({ rowsAffected: r.rowsAffected, lastInsertRowid: r.lastInsertRowid ?? null });
parentPort.on('message', async ({ id, op, stmt, stmts }) => {
	let wrote = false;
	try {
		await ready;
		let value = null;
		if (op === 'execute') value = plain(await (tx ? tx.execute(stmt) : client.batch([NO_AUTO_CHECKPOINT, stmt], 'write').then((r) => r[1])));
		else if (op === 'batch') value = (await (tx ? tx.batch(stmts) : client.batch([NO_AUTO_CHECKPOINT, ...stmts], 'write').then((r) => r.slice(1)))).map(plain);
		else if (op === 'unit') {
			const t = await client.transaction('write');
			try {
				await t.execute(NO_AUTO_CHECKPOINT);
				const done = [];
				for (const st of stmts) done.push(plain(await t.execute(typeof st === 'string' || !Array.isArray(st.args) ? st : { sql: st.sql, args: st.args.map((a) => ref(a, done)) })));
				await t.commit();
				value = done;
			} finally {
				t.close();
			}
		}
		else if (op === 'begin') {
			tx = await client.transaction('write');
			await tx.execute(NO_AUTO_CHECKPOINT);
		}
		else if (op === 'commit') { const t = tx; tx = null; await t.commit(); }
		else if (op === 'rollback') { const t = tx; tx = null; if (t) await t.rollback(); }
		else if (op === 'close') { const t = tx; tx = null; if (t) t.close(); }
		wrote = tx === null && (op === 'commit' || op === 'batch' || op === 'execute' || op === 'unit');
		parentPort.postMessage({ id, value });
	} catch (e) {
		parentPort.postMessage({ id, error: { message: String(e && e.message), code: e && e.code } });
	}
	// The committed pages are copied into the database file after the caller has its answer
	// (the commit itself is durable once the WAL is synced). PASSIVE: readers are not waited
	// for and nothing is blocked. Not after every write: many small imports a second would
	// each pay a checkpoint's sync of the database file; once the writes pause (CKPT_IDLE_MS),
	// or after CKPT_WRITES of them without a pause.
	if (wrote) {
		if (++writes >= CKPT_WRITES) await checkpoint();
		else if (!timer) timer = setTimeout(checkpoint, CKPT_IDLE_MS);
	}
});
`;

/**
 * The worker's own heap: it holds one message's statements at a time, and their large values
 * (plan slices, the stored file) move in as buffers, outside the heap. So a small heap that is
 * collected early keeps the server's memory from growing with garbage (V8 lets a heap grow
 * towards its limit before a full collection); a 2 MB young generation instead of 8 took
 * ~14 MB off a 100,000-row import's peak (measured, issue 17).
 */
const WORKER_LIMITS = { maxOldGenerationSizeMb: 64, maxYoungGenerationSizeMb: 2 };

/** A worker is let go after this long without work (the next import starts another). */
const IDLE_MS = 60_000;

class WorkerWriter implements ImportWriter {
	#url: string;
	#worker: Worker | null = null;
	#pending = new Map<number, { resolve: (v: unknown) => void; reject: (e: Error) => void }>();
	#next = 0;
	#idle: ReturnType<typeof setTimeout> | null = null;

	constructor(url: string) {
		this.#url = url;
	}

	#start(): Worker {
		if (this.#worker) return this.#worker;
		const w = new Worker(WORKER_SOURCE, {
			eval: true,
			workerData: { url: this.#url },
			resourceLimits: WORKER_LIMITS
		});
		w.on('message', ({ id, value, error }) => {
			const p = this.#pending.get(id);
			if (!p) return;
			this.#pending.delete(id);
			if (error) p.reject(Object.assign(new Error(error.message), { code: error.code }));
			else p.resolve(value);
			this.#settled();
		});
		const fail = (e: Error) => {
			if (this.#worker === w) this.#worker = null;
			for (const p of this.#pending.values()) p.reject(e);
			this.#pending.clear();
		};
		w.on('error', fail);
		w.on('exit', (code) => fail(new Error(`The import writer stopped (exit code ${code}).`)));
		this.#worker = w;
		return w;
	}

	/** Keeps the process alive while work is pending, not after; stops an idle worker. */
	#settled() {
		if (this.#pending.size > 0 || !this.#worker) return;
		this.#worker.unref();
		if (this.#idle) clearTimeout(this.#idle);
		this.#idle = setTimeout(() => {
			const w = this.#worker;
			if (w && this.#pending.size === 0) {
				this.#worker = null;
				void w.terminate();
			}
		}, IDLE_MS);
		this.#idle.unref();
	}

	#send<T>(message: {
		op: string;
		stmt?: InStatement;
		stmts?: (InStatement | UnitStatement)[];
	}): Promise<T> {
		const w = this.#start();
		w.ref();
		if (this.#idle) clearTimeout(this.#idle);
		const id = this.#next++;
		// Byte arguments (a stored file) move to the worker instead of being copied.
		const transfer: ArrayBuffer[] = [];
		for (const st of message.stmts ?? (message.stmt ? [message.stmt] : []))
			if (typeof st !== 'string' && Array.isArray(st.args))
				for (const a of st.args)
					// Only a view of a whole buffer of its own: a small Buffer shares Node's pool.
					if (
						a instanceof Uint8Array &&
						a.byteOffset === 0 &&
						a.buffer instanceof ArrayBuffer &&
						a.byteLength === a.buffer.byteLength
					)
						transfer.push(a.buffer);
		return new Promise<T>((resolve, reject) => {
			this.#pending.set(id, { resolve: resolve as (v: unknown) => void, reject });
			w.postMessage({ id, ...message }, transfer);
		});
	}

	execute(stmt: InStatement) {
		return this.#send<{ rowsAffected: number }>({ op: 'execute', stmt });
	}
	batch(stmts: InStatement[]) {
		return this.#send<{ rowsAffected: number; lastInsertRowid: bigint | null }[]>({
			op: 'batch',
			stmts
		});
	}
	unit(stmts: (InStatement | UnitStatement)[]) {
		return this.#send<StatementResult[]>({ op: 'unit', stmts });
	}
	async transaction(): Promise<WriteTx> {
		await this.#send({ op: 'begin' });
		let open = true;
		return {
			// About 8,000 rows, a few hundred ms of the writer's thread, per message.
			slicesPerMessage: 8,
			execute: (stmt) => this.#send({ op: 'execute', stmt }),
			batch: (stmts) => this.#send({ op: 'batch', stmts }),
			commit: async () => {
				open = false;
				await this.#send({ op: 'commit' });
			},
			rollback: async () => {
				open = false;
				await this.#send({ op: 'rollback' });
			},
			close: () => {
				if (open) void this.#send({ op: 'close' }).catch(() => {});
				open = false;
			}
		};
	}
}

/** The client itself: remote libSQL (asynchronous already) or an in-memory database. */
function clientWriter(db: Db): ImportWriter {
	const c = db.$client;
	return {
		execute: (stmt) => c.execute(stmt),
		batch: async (stmts) =>
			(await c.batch(stmts, 'write')).map((r) => ({
				rowsAffected: r.rowsAffected,
				lastInsertRowid: r.lastInsertRowid ?? null
			})),
		transaction: () => c.transaction('write'),
		unit: async (stmts) => {
			const tx = await c.transaction('write');
			try {
				const done: StatementResult[] = [];
				for (const st of stmts) {
					const r = await tx.execute(resolveRefs(st, done));
					done.push({ rowsAffected: r.rowsAffected, lastInsertRowid: r.lastInsertRowid ?? null });
				}
				await tx.commit();
				return done;
			} finally {
				tx.close();
			}
		}
	};
}

const writers = new WeakMap<Db, Promise<ImportWriter>>();

/** The writer for this database handle (one worker per handle, started on first use). */
export function importWriter(db: Db): Promise<ImportWriter> {
	let w = writers.get(db);
	if (!w) {
		w = (async () => {
			if ((db.$client as { protocol?: string }).protocol !== 'file') return clientWriter(db);
			const r = await db.$client.execute(
				"SELECT file FROM pragma_database_list WHERE name = 'main'"
			);
			const file = String(r.rows[0]?.file ?? '');
			return file ? new WorkerWriter(`file:${file}`) : clientWriter(db);
		})();
		writers.set(db, w);
	}
	return w;
}
