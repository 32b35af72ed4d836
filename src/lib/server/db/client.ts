import { createClient, type Client, type InStatement } from '@libsql/client';
import { drizzle, type LibSQLDatabase } from 'drizzle-orm/libsql';
import { migrate } from 'drizzle-orm/libsql/migrator';
import { mkdirSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import * as schema from './schema';

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
	if (url.startsWith('file:') && !url.includes(':memory:')) {
		// WAL lets the fleet table read while the workshop writes; it persists in the file.
		await client.execute('PRAGMA journal_mode = WAL');
	}
	return drizzle(client, { schema }) as Db;
}

export async function migrateDb(db: Db, migrationsFolder = resolve('drizzle')): Promise<void> {
	await migrate(db, { migrationsFolder });
}

const locks = new WeakMap<object, Promise<unknown>>();
const localWrites = new WeakMap<object, number>();

/**
 * A value that changes whenever the data may have changed: this process's write count
 * (writes through `withWriteLock`), this connection's `total_changes()`, and SQLite's
 * `PRAGMA data_version`, which
 * changes when another connection (another app server on the same file) commits. Through
 * a remote libSQL server there is no such signal: null, and callers do not cache.
 */
export async function dataVersion(db: Db): Promise<string | null> {
	const url = (db.$client as { protocol?: string }).protocol;
	if (url !== 'file') return null;
	// total_changes() counts this connection's own writes, even one made outside withWriteLock.
	const r = await db.$client.execute(
		'SELECT data_version, total_changes() FROM pragma_data_version()'
	);
	return `${Number(r.rows[0][0])}:${Number(r.rows[0][1])}:${localWrites.get(db) ?? 0}`;
}

/**
 * Runs `fn` while holding this process's write lock for the database handle.
 * SQLite allows one writer; two interleaved async transactions in the same
 * process would wait on each other's lock while blocking the event loop, so
 * every writing transaction (drizzle's or a raw batch) queues here.
 */
export async function withWriteLock<T>(db: Db, fn: () => Promise<T>): Promise<T> {
	const previous = locks.get(db) ?? Promise.resolve();
	let release!: () => void;
	const mine = new Promise<void>((r) => (release = r));
	const chained = previous.then(() => mine);
	locks.set(db, chained);
	await previous;
	try {
		return await fn();
	} finally {
		localWrites.set(db, (localWrites.get(db) ?? 0) + 1);
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
