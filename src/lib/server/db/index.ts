import { migrateDb, openDb, DEFAULT_DATABASE_URL, type Db } from './client';

let instance: Promise<Db> | undefined;

/** The application's database, opened once from DATABASE_URL and migrated on first use. */
export function getDb(): Promise<Db> {
	instance ??= (async () => {
		const db = await openDb(
			process.env.DATABASE_URL || DEFAULT_DATABASE_URL,
			process.env.DATABASE_AUTH_TOKEN
		);
		await migrateDb(db);
		return db;
	})();
	return instance;
}

export type { Db, Tx } from './client';
export {
	writeTx,
	withWriteLock,
	runBatch,
	dataVersion,
	dataVersionSql,
	readerOf,
	closeReader
} from './client';
export type { Reader, ReaderRow } from './reader';
export type { TxHook } from './client';
