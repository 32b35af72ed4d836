import type { IDBPDatabase } from 'idb';
import { allOps, type StoredPage } from './store';
import type { OfflineState } from './views';

type Db = Parameters<typeof allOps>[0] extends IDBPDatabase<infer S> ? IDBPDatabase<S> : never;

/** Everything the views need from the user's database, read in one go. */
export async function loadState(db: Db): Promise<OfflineState> {
	const [pages, ops] = await Promise.all([db.getAll('pages'), allOps(db)]);
	return { pages: new Map(pages.map((p: StoredPage) => [p.path, p])), ops };
}
