import { createClient, type Client, type InStatement } from '@libsql/client';
import { drizzle, type LibSQLDatabase } from 'drizzle-orm/libsql';
import { migrate } from 'drizzle-orm/libsql/migrator';
import { mkdirSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import * as schema from './schema';
import { clientReader, LocalReader, type Reader } from './reader';
import { leavePlace } from '../admission-place';
import { keepSelects } from './kept-selects';

export type Db = LibSQLDatabase<typeof schema> & { $client: Client };
export type Tx = Parameters<Parameters<Db['transaction']>[0]>[0];

export const DEFAULT_DATABASE_URL = 'file:data/packledger.db';

/** Opens a database: a local SQLite file (`file:`), `:memory:`, or a libSQL server (`libsql://`, `http(s)://`). */
export async function openDb(url: string = DEFAULT_DATABASE_URL, authToken?: string): Promise<Db> {
	if (url.startsWith('file:') && !url.includes(':memory:')) {
		const path = url.slice('file:'.length);
		mkdirSync(dirname(resolve(path)), { recursive: true });
	}
	const client = createClient({ url, authToken, timeout: 5000 });
	const local = url.startsWith('file:') && !url.includes(':memory:');
	if (local) {
		// WAL lets the fleet table read while the workshop writes; it persists in the file.
		await client.execute('PRAGMA journal_mode = WAL');
	}
	// Plain SELECTs on the read connection with their statements kept (kept-selects.ts);
	// PACKLEDGER_KEPT_SELECTS=0 sends them through the client as before (to compare).
	const keep = local && process.env.PACKLEDGER_KEPT_SELECTS !== '0';
	const reader = () => readerOf(db) as LocalReader;
	const db: Db = drizzle(keep ? keepSelects(client, reader) : client, { schema }) as Db;
	if (local) localUrls.set(db, url);
	return db;
}

const localUrls = new WeakMap<object, string>();
const readers = new WeakMap<object, Reader>();

/**
 * The connection that read-only queries on the request path run on (the session's user, the
 * fleet, trace, the public record, the data version). For a local file it is a connection of
 * its own that never writes (`LocalReader`: prepared statements kept, 64 MB of page cache,
 * `query_only`), and `PRAGMA data_version` on it changes with every commit by any other
 * connection, this process's writes included (see `dataVersion`). Through a libSQL server or
 * for `:memory:` it is the client itself.
 */
export function readerOf(db: Db): Reader {
	let reader = readers.get(db);
	if (!reader) {
		const url = localUrls.get(db);
		// One connection: SQLite calls run on this thread one at a time anyway, and it never
		// holds a transaction, so nothing waits behind one.
		reader = url ? new LocalReader(localPath(url)) : clientReader(db.$client);
		readers.set(db, reader);
	}
	return reader;
}

/** The file of a `file:` URL (without a query string). */
function localPath(url: string): string {
	const path = url.slice('file:'.length);
	const q = path.indexOf('?');
	return q === -1 ? path : path.slice(0, q);
}

/** Closes the local reader of a database handle, if one was opened (tests, scripts). */
export function closeReader(db: Db): void {
	const reader = readers.get(db);
	if (reader instanceof LocalReader) reader.close();
	readers.delete(db);
}

export async function migrateDb(db: Db, migrationsFolder = resolve('drizzle')): Promise<void> {
	await migrate(db, { migrationsFolder });
}

const locks = new WeakMap<object, Promise<unknown>>();

/**
 * A value that changes whenever the data may have changed, for caches that must stay right
 * across several app servers on one file. It is `PRAGMA data_version` read on the reader
 * connection (`readerOf`): SQLite changes it whenever another connection — another process,
 * or this process's own pool, which is where every write is made — commits (sqlite.org,
 * "PRAGMA data_version"). The reader never writes, so no write goes unseen; and it is one
 * connection for the life of the process, so two values are always comparable (values of two
 * different connections are not). Read it before the data it guards: a commit in between
 * then only costs a second read. Through a remote libSQL server there is no such signal:
 * null, and callers do not cache.
 */
export async function dataVersion(db: Db): Promise<string | null> {
	if (!localUrls.has(db)) return null;
	const r = await readerOf(db).execute('PRAGMA data_version');
	return String(r.rows[0][0]);
}

/**
 * `dataVersion` as an SQL expression, for a statement on the reader connection that reads
 * the version in the same snapshot as its data; NULL where there is no version.
 */
export function dataVersionSql(db: Db): string {
	return localUrls.has(db) ? '(SELECT data_version FROM pragma_data_version())' : 'NULL';
}

/**
 * Runs `fn` while holding this process's write lock for the database handle.
 * SQLite allows one writer; two interleaved async transactions in the same
 * process would wait on each other's lock while blocking the event loop, so
 * every writing transaction (drizzle's or a raw batch) queues here.
 */
export async function withWriteLock<T>(db: Db, fn: () => Promise<T>): Promise<T> {
	const held = locks.get(db);
	// Waiting here is waiting for the database, not for this process: the request's place in
	// the admission gate goes to the next request in line (admission.ts).
	if (held) leavePlace();
	const previous = held ?? Promise.resolve();
	let release!: () => void;
	const mine = new Promise<void>((r) => (release = r));
	const chained = previous.then(() => mine);
	locks.set(db, chained);
	await previous;
	try {
		return await fn();
	} finally {
		release();
		if (locks.get(db) === chained) locks.delete(db);
	}
}

/**
 * Work a caller adds to a service's own write transaction, handed to that service (and by it
 * to its `writeTx`) explicitly: e.g. the sync endpoint records an operation id in the same
 * transaction as the write the service makes. Housekeeping writes the service makes on the
 * way (a default stored the first time it is asked for) never see it, because nobody passes it.
 */
export interface TxHook {
	/** Runs first in the transaction; throwing rolls it back before anything is written. */
	before?: (tx: Tx) => Promise<void>;
	/** Runs after the transaction's own work, before COMMIT; throwing rolls everything back. */
	after: (tx: Tx, result: unknown) => Promise<void>;
}

/**
 * Runs `fn` in a write transaction (BEGIN IMMEDIATE), one at a time per database handle; with
 * `hook`, its `before` and `after` run inside the same transaction around `fn`.
 */
export function writeTx<T>(db: Db, fn: (tx: Tx) => Promise<T>, hook?: TxHook): Promise<T> {
	if (!hook) return withWriteLock(db, () => db.transaction(fn, { behavior: 'immediate' }));
	return withWriteLock(db, () =>
		db.transaction(
			async (tx) => {
				await hook.before?.(tx);
				const result = await fn(tx);
				await hook.after(tx, result);
				return result;
			},
			{ behavior: 'immediate' }
		)
	);
}

/**
 * Runs statements as one transaction (`batch`). Callers that write hold `withWriteLock`.
 * Through a remote libSQL server this is one network round trip.
 */
export function runBatch(db: Db, statements: InStatement[]) {
	return db.$client.batch(statements, 'write');
}
